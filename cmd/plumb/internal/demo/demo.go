package demo

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"

	"plumb/internal/atomicfile"
)

// Channel is one numeric column of the demo data with the affine map from
// standardised units z to the value written: value = Centre + Scale·z.
type Channel struct {
	Name          string
	Centre, Scale float64
}

// Channels lists the 20 feature columns in the order they are written.
var Channels = []Channel{
	{"air_temp_mean_c", 14, 4},
	{"air_temp_range_c", 9, 2.5},
	{"rel_humidity_pct", 70, 8},
	{"dew_point_c", 8, 3},
	{"wind_mean_ms", 3.5, 1.2},
	{"gust_max_ms", 11, 3},
	{"solar_mj_m2", 14, 4},
	{"rain_mm", 2.5, 1.5},
	{"soil_temp_5cm_c", 13, 3.5},
	{"soil_temp_20cm_c", 12, 2.5},
	{"soil_moist_5cm_pct", 28, 6},
	{"soil_moist_20cm_pct", 31, 5},
	{"soil_moist_50cm_pct", 34, 4},
	{"leaf_wet_hours", 6, 2.5},
	{"soil_ec_ds_m", 0.9, 0.25},
	{"soil_ph", 6.4, 0.4},
	{"canopy_index", 0.55, 0.1},
	{"battery_v", 12.6, 0.3},
	{"signal_dbm", -85, 7},
	{"pressure_hpa", 1012, 6},
}

// Site describes one kind of site: how many records it contributes and how
// they scatter around its centre (standard deviation in standardised units).
// Stretch, when non-zero, multiplies the noise of the first two channels.
type Site struct {
	Name    string
	Records int
	Spread  float64
	Stretch float64
}

// Sites lists the clustered site kinds; the background records are extra.
var Sites = []Site{
	{"valley", 130, 1.2, 0},
	{"upland", 90, 0.8, 0},
	{"riverside", 60, 0.7, 3},
	{"hedgerow", 45, 0.45, 0},
	{"glasshouse", 25, 0.2, 0},
}

// NoiseLabel is the label of the background records and NoiseRecords their
// number.
const (
	NoiseLabel   = "faulty"
	NoiseRecords = 50
)

// Data is the generated table.
type Data struct {
	// IDs has one id per record ("st0001", …).
	IDs []string
	// Labels has the site kind of each record.
	Labels []string
	// X holds the N×20 features row-major in physical units.
	X    []float64
	N, D int
}

// Generate draws the demo table from the given seed. Records are shuffled so
// that the file order says nothing about the site.
func Generate(seed uint64) *Data {
	r := rand.New(rand.NewPCG(seed, 0x706c756d62))
	d := len(Channels)
	centreScale := 4.0
	centres := make([][]float64, len(Sites))
	for s := range Sites {
		c := make([]float64, d)
		for j := range c {
			c[j] = centreScale * r.NormFloat64()
		}
		centres[s] = c
	}
	// Background box: the range spanned by the centres, widened a little.
	lo := make([]float64, d)
	hi := make([]float64, d)
	for j := 0; j < d; j++ {
		lo[j], hi[j] = math.Inf(1), math.Inf(-1)
		for s := range centres {
			lo[j] = math.Min(lo[j], centres[s][j])
			hi[j] = math.Max(hi[j], centres[s][j])
		}
		lo[j] -= 2
		hi[j] += 2
	}
	type rec struct {
		label string
		z     []float64
	}
	var recs []rec
	for s, site := range Sites {
		for i := 0; i < site.Records; i++ {
			z := make([]float64, d)
			for j := range z {
				sd := site.Spread
				if site.Stretch != 0 && j < 2 {
					sd *= site.Stretch
				}
				z[j] = centres[s][j] + sd*r.NormFloat64()
			}
			recs = append(recs, rec{site.Name, z})
		}
	}
	for i := 0; i < NoiseRecords; i++ {
		z := make([]float64, d)
		for j := range z {
			z[j] = lo[j] + (hi[j]-lo[j])*r.Float64()
		}
		recs = append(recs, rec{NoiseLabel, z})
	}
	r.Shuffle(len(recs), func(i, j int) { recs[i], recs[j] = recs[j], recs[i] })
	out := &Data{N: len(recs), D: d, X: make([]float64, len(recs)*d)}
	for i, rc := range recs {
		out.IDs = append(out.IDs, fmt.Sprintf("st%04d", i+1))
		out.Labels = append(out.Labels, rc.label)
		for j, ch := range Channels {
			out.X[i*d+j] = ch.Centre + ch.Scale*rc.z[j]
		}
	}
	return out
}

// Header returns the CSV header: id, site, then the channel names.
func Header() []string {
	h := []string{"id", "site"}
	for _, c := range Channels {
		h = append(h, c.Name)
	}
	return h
}

// CSV encodes the table with a header row; values use the shortest
// representation that reads back to the same float64 after rounding to six
// significant digits (the precision of the imaginary sensors).
func (d *Data) CSV() []byte {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	_ = w.Write(Header())
	row := make([]string, 2+d.D)
	for i := 0; i < d.N; i++ {
		row[0], row[1] = d.IDs[i], d.Labels[i]
		for j := 0; j < d.D; j++ {
			row[2+j] = strconv.FormatFloat(d.X[i*d.D+j], 'g', 6, 64)
		}
		_ = w.Write(row)
	}
	w.Flush()
	return buf.Bytes()
}

// FileName is the name of the CSV that WriteCSV creates in its directory.
const FileName = "field-stations.csv"

// WriteCSV writes the table to dir/field-stations.csv atomically (temporary
// file in dir, then rename) and returns the path. dir is created if needed.
func WriteCSV(dir string, d *Data) (string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return "", fmt.Errorf("demo: %w", err)
	}
	path := filepath.Join(dir, FileName)
	if err := atomicfile.WriteFile(path, d.CSV()); err != nil {
		return "", fmt.Errorf("demo: %w", err)
	}
	return path, nil
}
