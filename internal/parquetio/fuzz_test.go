package parquetio

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzRead: any bytes either decode as a table or give an error; never a
// panic. Seeded with a file written by Write and damaged copies of it.
func FuzzRead(f *testing.F) {
	dir := f.TempDir()
	good := filepath.Join(dir, "good.parquet")
	if err := Write(good, sample()); err != nil {
		f.Fatal(err)
	}
	b, _ := os.ReadFile(good)
	f.Add(b)
	f.Add(b[:len(b)/2])
	f.Add([]byte("PAR1PAR1"))
	f.Fuzz(func(t *testing.T, data []byte) {
		p := filepath.Join(t.TempDir(), "f.parquet")
		os.WriteFile(p, data, 0o644)
		tb, err := Read(p)
		if err != nil {
			return
		}
		n := tb.Rows()
		for _, c := range tb.Columns {
			if c.Len() != n {
				t.Fatalf("column %s has %d values, table %d rows", c.Name, c.Len(), n)
			}
		}
	})
}
