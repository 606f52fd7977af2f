// Package parquetio writes and reads the small, flat Parquet tables of a plumb
// study: a list of named, typed columns of equal length plus file-level
// key-value metadata.
//
// Every file is written the same way so that any reader accepts it: zstd
// compression, a root schema node with repetition REQUIRED (some pure
// JavaScript readers reject the OPTIONAL root other writers emit), columns
// REQUIRED unless the caller marks them nullable, one row group for tables
// up to a million rows, and an atomic write: the bytes go to a temporary
// file in the destination directory, are flushed to stable storage with
// fsync, and the file is renamed over the destination, so a reader (or a
// process killed half-way) never sees a partial file. Temporary files are
// named ".NAME.tmp-RANDOM", so a glob such as "layouts/*.parquet" never
// matches one.
//
// References:
//   - Apache Parquet format specification, https://parquet.apache.org/docs/file-format/
//   - Apache Arrow for Go, github.com/apache/arrow-go/v18 (pqarrow).
//   - POSIX rename(2): replacing a file within one file system is atomic.
package parquetio
