// Package demo invents the dataset behind `plumb demo`.
//
// The scenario is made up for this project. An imaginary network of
// automated field stations sends one summary record per station-day with 20
// numeric channels (air temperature mean and range, humidity, dew point,
// wind, solar radiation, rain, soil temperature and moisture at several
// depths, leaf wetness, soil conductivity and pH, a canopy greenness index,
// battery voltage, radio signal strength and air pressure). Stations sit in
// five kinds of site, and each kind leaves its own signature in the channels:
//
//	site        records  spread   shape
//	valley         130    broad    round
//	upland          90    medium   round
//	riverside       60    medium   stretched along two channels
//	hedgerow        45    tight    round
//	glasshouse      25    very tight
//	faulty          50    background: records from stations with failing
//	                      sensors, spread uniformly over the whole range
//
// So the clusters differ in size (25 to 130 records) and density (their
// standard deviations differ by a factor of about six), one is elongated, and
// a tenth of the records are noise. That is what makes the scenario useful for
// a stability study: a map of it looks different at small and large
// perplexity, and the background records tend to form spurious clumps.
//
// Generate is deterministic: the same seed gives the same records, bit for
// bit, on every machine. Records are drawn in standardised units (cluster
// centres from a standard normal scaled by 4, within-cluster noise Gaussian)
// and then mapped to plausible physical units per channel by a fixed affine
// map, which does not change the geometry beyond a per-column scale.
//
// References:
//   - Wattenberg, M., Viégas, F. & Johnson, I. How to Use t-SNE Effectively.
//     Distill, 2016 (why clusters of different density and background noise
//     are the interesting cases).
package demo
