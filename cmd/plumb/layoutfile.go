package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"strconv"

	"plumb/internal/atomicfile"
	"plumb/internal/dataset"
	"plumb/internal/parquetio"
)

// writeLayout writes one row per point (point, id, label when given, x, y) to out,
// atomically, with the run description alongside: in the key-value metadata
// of a Parquet file (key "plumb.run", JSON), in a sidecar out+".json" for CSV.
func writeLayout(out, format string, data *dataset.Dataset, y []float64, rec embedRecord) error {
	meta, err := json.Marshal(rec)
	if err != nil {
		return err
	}
	switch format {
	case "csv":
		if err := atomicfile.Write(out, func(f *os.File) error { return writeLayoutCSV(f, data, y) }); err != nil {
			return fmt.Errorf("write %s: %w", out, err)
		}
		pretty, _ := json.MarshalIndent(rec, "", "  ")
		if err := atomicfile.WriteFile(out+".json", append(pretty, '\n')); err != nil {
			return fmt.Errorf("write %s.json: %w", out, err)
		}
		return nil
	case "parquet":
		n := data.N
		point := make([]int32, n)
		xs := make([]float64, n)
		ys := make([]float64, n)
		for i := range n {
			point[i] = int32(i)
			xs[i], ys[i] = y[2*i], y[2*i+1]
		}
		cols := []parquetio.Column{
			{Name: "point", Values: point},
			{Name: "id", Values: data.IDs},
		}
		if data.Labels != nil {
			cols = append(cols, parquetio.Column{Name: "label", Values: data.Labels})
		}
		cols = append(cols, parquetio.Column{Name: "x", Values: xs}, parquetio.Column{Name: "y", Values: ys})
		t := &parquetio.Table{Columns: cols, Meta: map[string]string{
			"plumb.version":           version,
			"plumb.table":             "layout",
			"plumb.input_fingerprint": data.Fingerprint,
			"plumb.run":               string(meta),
		}}
		return parquetio.Write(out, t)
	}
	return fmt.Errorf("unknown layout format %q", format)
}

func writeLayoutCSV(w io.Writer, data *dataset.Dataset, y []float64) error {
	bw := bufio.NewWriter(w)
	if data.Labels != nil {
		bw.WriteString("point,id,label,x,y\n")
	} else {
		bw.WriteString("point,id,x,y\n")
	}
	buf := make([]byte, 0, 64)
	for i := 0; i < data.N; i++ {
		buf = strconv.AppendInt(buf[:0], int64(i), 10)
		buf = append(buf, ',')
		buf = appendCSVField(buf, data.IDs[i])
		buf = append(buf, ',')
		if data.Labels != nil {
			buf = appendCSVField(buf, data.Labels[i])
			buf = append(buf, ',')
		}
		buf = strconv.AppendFloat(buf, y[2*i], 'g', -1, 64)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, y[2*i+1], 'g', -1, 64)
		buf = append(buf, '\n')
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// appendCSVField quotes s when RFC 4180 needs it.
func appendCSVField(dst []byte, s string) []byte {
	need := s != "" && (s[0] == ' ' || s[len(s)-1] == ' ')
	for i := 0; i < len(s) && !need; i++ {
		switch s[i] {
		case ',', '"', '\n', '\r':
			need = true
		}
	}
	if !need {
		return append(dst, s...)
	}
	dst = append(dst, '"')
	for i := 0; i < len(s); i++ {
		if s[i] == '"' {
			dst = append(dst, '"')
		}
		dst = append(dst, s[i])
	}
	return append(dst, '"')
}

// checkLayoutOut refuses an --out that would overwrite a file plumb did not
// write: the input itself (or a link to it), or any existing file that is
// not a layout plumb embed wrote (a Parquet file with plumb's "plumb.run"
// metadata; a CSV file whose sidecar FILE.json names plumb). The same holds
// for a CSV layout's sidecar.
func checkLayoutOut(out, format, input string) error {
	in, inErr := os.Stat(input)
	for _, p := range []string{out, out + ".json"} {
		if p != out && format != "csv" {
			break
		}
		fi, err := os.Stat(p)
		if err != nil {
			continue
		}
		if inErr == nil && os.SameFile(fi, in) {
			return fmt.Errorf("--out %s is the input file %s (or a link to it); refusing to overwrite the data with the layout", p, input)
		}
		if !fi.Mode().IsRegular() {
			return fmt.Errorf("--out %s exists and is not a regular file", p)
		}
	}
	if format == "csv" {
		if fi, err := os.Stat(out + ".json"); err == nil && fi.Size() > 0 && !plumbSidecar(out+".json") {
			return fmt.Errorf("--out %s: %s.json exists and was not written by plumb embed; refusing to overwrite it", out, out)
		}
	}
	fi, err := os.Stat(out)
	if err != nil {
		return nil
	}
	ours := false
	switch format {
	case "parquet":
		m, _, err := parquetio.ReadMeta(out)
		ours = err == nil && m["plumb.table"] == "layout" && m["plumb.run"] != ""
	case "csv":
		ours = plumbSidecar(out + ".json")
	}
	if !ours && fi.Size() > 0 {
		return hintError{err: fmt.Errorf("--out %s exists and was not written by plumb embed; refusing to overwrite it", out),
			hint: "choose another --out file, or remove that one first"}
	}
	return nil
}

// plumbSidecar reports whether path is the JSON sidecar of a CSV layout
// written by plumb embed.
func plumbSidecar(path string) bool {
	b, err := os.ReadFile(path)
	if err != nil || len(b) > 1<<20 {
		return false
	}
	var rec embedRecord
	return json.Unmarshal(b, &rec) == nil && rec.Tool == "plumb" && rec.InputFingerprint != ""
}
