package sweep

// neighborSeed seeds the approximate neighbour search. It is fixed, so
// every shard and every resume builds the same lists.
const neighborSeed = 0x706c756d62
