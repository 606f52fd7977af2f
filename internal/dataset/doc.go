// Package dataset reads the input table of a t-SNE study: numeric feature
// columns, an optional id column and an optional label column, from CSV,
// TSV (optionally gzip-compressed), Parquet or Arrow IPC files. It refuses
// bad input with one-line errors that name the file, the row and the
// column (*InputError), warns about constant columns, and optionally
// standardises the features (z-scores with the population standard
// deviation) and projects them onto their first principal components
// (thin SVD of the centred data). A Fingerprint (SHA-256 of the sizes,
// feature bits, ids and labels) identifies the prepared data so that a
// study can tell whether it was made from the same input; it does not
// depend on the file format.
//
// Row numbers in errors are 1-based physical line numbers for CSV and TSV
// (the header is line 1) and 1-based data rows for Parquet and Arrow.
//
// Inputs must be regular files (a FIFO or a device would block or never
// end, and a study's input is read again later). Text is UTF-8, or UTF-16
// with a byte order mark; bytes that are not UTF-8 in ids, labels and
// column names are refused, never replaced. Rows are bounded (16 MiB), so
// a file without line breaks cannot fill memory. The first bytes decide
// the format (Parquet and Arrow magic numbers, gzip), and when a text
// read fails its first lines are sniffed for another delimiter or
// decimal commas, which the error then names with the options that read
// them. Feature values are bounded in magnitude (1e100, unless
// standardised) so that squared distances stay finite; -0 is read as +0.
//
// References:
//
//   - Y. Shafranovich, "Common Format and MIME Type for Comma-Separated
//     Values (CSV) Files", RFC 4180, IETF, 2005.
//   - Apache Parquet format specification, https://parquet.apache.org/docs/
//     (read with github.com/apache/arrow-go/v18/parquet/pqarrow).
//   - Apache Arrow columnar format and IPC (file and stream) specification,
//     https://arrow.apache.org/docs/format/Columnar.html.
//   - I. T. Jolliffe, Principal Component Analysis, 2nd ed., Springer, 2002
//     (PCA via the singular value decomposition of the centred data).
//   - G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed., Johns
//     Hopkins University Press, 2013 (why the SVD of X rather than the
//     eigen-decomposition of XᵀX: the latter squares the condition number).
//   - L. J. P. van der Maaten, "Accelerating t-SNE using Tree-Based
//     Algorithms", JMLR 15, 2014 (k = ⌊3·perplexity⌋ neighbours, hence
//     n − 1 ≥ 3·perplexity).
//   - The Unicode Standard, chapter 3 (UTF-8 and UTF-16 encoding forms,
//     byte order marks); RFC 1952 (gzip magic bytes).
//   - F. J. Damerau, "A technique for computer detection and correction of
//     spelling errors", CACM 7(3), 1964 (the edit distance used to suggest
//     a column name).
package dataset
