package parquetio_test

import (
	"fmt"
	"os"
	"path/filepath"

	"plumb/internal/parquetio"
)

func ExampleWrite() {
	dir, _ := os.MkdirTemp("", "parquetio")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "t.parquet")
	err := parquetio.Write(path, &parquetio.Table{
		Columns: []parquetio.Column{
			{Name: "point", Values: []int32{0, 1}},
			{Name: "x", Values: []float64{0.5, -1}},
			{Name: "label", Values: []string{"a", ""}, Nullable: true, Valid: []bool{true, false}},
		},
		Meta: map[string]string{"plumb.table": "example"},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	t, _ := parquetio.Read(path)
	x, _ := t.Float64("x")
	fmt.Println(t.Rows(), x, t.Column("label").IsNull(1), t.Meta["plumb.table"])
	// Output: 2 [0.5 -1] true example
}
