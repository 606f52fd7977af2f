package dataset

import (
	"bufio"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// writeSyntheticCSV writes n rows of d seeded random features (plus an id
// and a label column) to dir and returns the path. Synthetic data for a
// benchmark only.
func writeSyntheticCSV(tb testing.TB, dir string, n, d int) string {
	tb.Helper()
	path := filepath.Join(dir, fmt.Sprintf("synth_%d_%d.csv", n, d))
	f, err := os.Create(path)
	if err != nil {
		tb.Fatal(err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	rng := rand.New(rand.NewPCG(1, 2))
	w.WriteString("id,label")
	for j := 0; j < d; j++ {
		fmt.Fprintf(w, ",f%d", j)
	}
	w.WriteByte('\n')
	var buf []byte
	for i := 0; i < n; i++ {
		buf = strconv.AppendInt(buf[:0], int64(i), 10)
		buf = append(buf, ",c"...)
		buf = strconv.AppendInt(buf, int64(i%7), 10)
		for j := 0; j < d; j++ {
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, rng.NormFloat64(), 'g', 8, 64)
		}
		buf = append(buf, '\n')
		w.Write(buf)
	}
	if err := w.Flush(); err != nil {
		tb.Fatal(err)
	}
	if err := f.Close(); err != nil {
		tb.Fatal(err)
	}
	return path
}

// BenchmarkReadCSV reads seeded synthetic CSVs of 50 features (8
// significant digits per cell). Set PLUMB_LONG=1 to include 1M rows
// (a ~500 MB temporary file).
func BenchmarkReadCSV(b *testing.B) {
	sizes := []int{10_000, 100_000}
	if os.Getenv("PLUMB_LONG") != "" {
		sizes = append(sizes, 1_000_000)
	}
	dir := b.TempDir()
	for _, n := range sizes {
		path := writeSyntheticCSV(b, dir, n, 50)
		st, _ := os.Stat(path)
		b.Run(fmt.Sprintf("n=%d,d=50", n), func(b *testing.B) {
			b.SetBytes(st.Size())
			b.ReportAllocs()
			var sink *Dataset
			for b.Loop() {
				ds, err := Read(path, Options{IDColumn: "id", LabelColumn: "label"})
				if err != nil {
					b.Fatal(err)
				}
				sink = ds
			}
			if sink.N != n {
				b.Fatalf("read %d rows, want %d", sink.N, n)
			}
		})
	}
}

// BenchmarkPCA projects seeded Gaussian data with 50 features onto 10
// components. Set PLUMB_LONG=1 to include 1M rows.
func BenchmarkPCA(b *testing.B) {
	sizes := []int{10_000, 100_000}
	if os.Getenv("PLUMB_LONG") != "" {
		sizes = append(sizes, 1_000_000)
	}
	const d, k = 50, 10
	for _, n := range sizes {
		rng := rand.New(rand.NewPCG(3, 4))
		x := make([]float64, n*d)
		for i := range x {
			x[i] = rng.NormFloat64() * float64(1+i%d)
		}
		b.Run(fmt.Sprintf("n=%d,d=%d,k=%d", n, d, k), func(b *testing.B) {
			b.ReportAllocs()
			var sink []float64
			for b.Loop() {
				s, _, err := PCA(x, n, d, k)
				if err != nil {
					b.Fatal(err)
				}
				sink = s
			}
			if len(sink) != n*k {
				b.Fatal("wrong size")
			}
		})
	}
}
