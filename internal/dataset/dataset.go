package dataset

// Dataset is a table of N points with D numeric features, read from a file.
type Dataset struct {
	// Source is the file the data came from.
	Source string
	N, D   int
	// X holds the features row-major: point i is X[i*D : (i+1)*D].
	X []float64
	// Columns names the D feature columns (after --columns selection; after
	// PCA they are pc1..pcK).
	Columns []string
	// IDs has one id per point: the id column's values, or the 0-based row
	// number as a decimal string when there is no id column.
	IDs []string
	// Labels has one label per point, or is nil when no label column was given.
	Labels []string
	// Fingerprint is a hex SHA-256 of N, D, the feature bits (after any
	// standardisation or PCA), the ids and the labels.
	Fingerprint string
}
