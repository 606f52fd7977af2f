package dataset_test

import (
	"errors"
	"fmt"

	"plumb/internal/dataset"
)

func ExampleRead() {
	ds, err := dataset.Read("../../testdata/iris.csv", dataset.Options{IDColumn: "id", LabelColumn: "species"})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(ds.N, ds.D, ds.Columns)
	fmt.Println(ds.IDs[0], ds.Labels[0], ds.X[:4])
	// Output:
	// 150 4 [sepal_length sepal_width petal_length petal_width]
	// iris000 setosa [5.1 3.5 1.4 0.2]
}

func ExampleRead_pca() {
	ds, err := dataset.Read("../../testdata/iris.csv", dataset.Options{IDColumn: "id", LabelColumn: "species", PCA: 2})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(ds.Columns)
	fmt.Printf("%.4f %.4f\n", ds.VarianceRatio[0], ds.VarianceRatio[1])
	// Output:
	// [pc1 pc2]
	// 0.9246 0.0531
}

func ExampleInputError() {
	_, err := dataset.Read("../../testdata/inputs/not_a_number.csv", dataset.Options{IDColumn: "id", LabelColumn: "group"})
	var ie *dataset.InputError
	if errors.As(err, &ie) {
		fmt.Println(ie.Row, ie.Column, ie.ColumnName)
	}
	fmt.Println(err)
	// Output:
	// 3 4 b
	// ../../testdata/inputs/not_a_number.csv: row 3, column 4 (b): not a number: "abc"
}

func ExampleDataset_CheckPerplexity() {
	ds, _ := dataset.Read("../../testdata/iris.csv", dataset.Options{IDColumn: "id", LabelColumn: "species"})
	fmt.Println(ds.CheckPerplexity(30))
	fmt.Println(ds.CheckPerplexity(50))
	// Output:
	// <nil>
	// ../../testdata/iris.csv: 150 points are too few for perplexity 50: t-SNE needs n − 1 ≥ 3·perplexity, so the largest perplexity allowed is 49.66
}

func ExampleStandardize() {
	x := []float64{
		1, 10,
		2, 10,
		3, 10,
	}
	dataset.Standardize(x, 3, 2)
	fmt.Printf("%.4f\n", x)
	// Output:
	// [-1.2247 0.0000 0.0000 0.0000 1.2247 0.0000]
}

func ExamplePCA() {
	// Points on the line y = 2x: one component explains everything.
	x := []float64{0, 0, 1, 2, 2, 4, 3, 6}
	scores, ratio, err := dataset.PCA(x, 4, 2, 1)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f %.4f\n", scores, ratio)
	// Output:
	// [-3.3541 -1.1180 1.1180 3.3541] [1.0000]
}
