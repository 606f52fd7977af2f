package demo

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"testing"

	"plumb/internal/fixture"
)

func TestGenerateShapeAndDeterminism(t *testing.T) {
	a := Generate(7)
	b := Generate(7)
	c := Generate(8)
	want := NoiseRecords
	for _, s := range Sites {
		want += s.Records
	}
	if a.N != want || a.D != 20 || len(a.X) != a.N*a.D || len(a.IDs) != a.N || len(a.Labels) != a.N {
		t.Fatalf("got N=%d D=%d len(X)=%d, want N=%d D=20", a.N, a.D, len(a.X), want)
	}
	if !bytes.Equal(a.CSV(), b.CSV()) {
		t.Fatal("same seed gave different tables")
	}
	if bytes.Equal(a.CSV(), c.CSV()) {
		t.Fatal("different seeds gave the same table")
	}
	count := map[string]int{}
	for _, l := range a.Labels {
		count[l]++
	}
	for _, s := range Sites {
		if count[s.Name] != s.Records {
			t.Errorf("site %s: got %d records want %d", s.Name, count[s.Name], s.Records)
		}
	}
	if count[NoiseLabel] != NoiseRecords {
		t.Errorf("noise: got %d want %d", count[NoiseLabel], NoiseRecords)
	}
}

// The clusters must really differ in density: the mean within-site distance
// to the site's mean grows with the Spread we asked for (a property of the
// construction; the per-column affine map keeps the order).
func TestDensitiesDiffer(t *testing.T) {
	d := Generate(1)
	radius := map[string]float64{}
	for _, s := range Sites {
		mean := make([]float64, d.D)
		n := 0
		for i := 0; i < d.N; i++ {
			if d.Labels[i] != s.Name {
				continue
			}
			n++
			for j := 0; j < d.D; j++ {
				mean[j] += (d.X[i*d.D+j] - Channels[j].Centre) / Channels[j].Scale
			}
		}
		for j := range mean {
			mean[j] /= float64(n)
		}
		var r float64
		for i := 0; i < d.N; i++ {
			if d.Labels[i] != s.Name {
				continue
			}
			var s2 float64
			for j := 0; j < d.D; j++ {
				z := (d.X[i*d.D+j] - Channels[j].Centre) / Channels[j].Scale
				s2 += (z - mean[j]) * (z - mean[j])
			}
			r += math.Sqrt(s2)
		}
		radius[s.Name] = r / float64(n)
	}
	if !(radius["glasshouse"] < radius["hedgerow"] && radius["hedgerow"] < radius["upland"] && radius["upland"] < radius["valley"]) {
		t.Errorf("radii not ordered by spread: %v", radius)
	}
}

func TestWriteCSV(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	d := Generate(3)
	path, err := WriteCSV(dir, d)
	if err != nil {
		t.Fatal(err)
	}
	tb := fixture.MustReadCSV(t, path)
	if len(tb.Rows) != d.N || len(tb.Header) != 22 {
		t.Fatalf("got %d data rows × %d cols, want %d × 22", len(tb.Rows), len(tb.Header), d.N)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("got %d files in dir, want only the CSV (no temp files left)", len(entries))
	}
}
