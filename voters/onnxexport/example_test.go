package onnxexport_test

import (
	"bytes"
	"fmt"
	"log"

	"surety/datasets"
	"surety/voters"
	"surety/voters/onnxexport"
)

// A vote of two stumps written as ONNX, the certificate's figures in the
// metadata. The inputs are the schema's columns: one tensor per column.
func ExampleWrite() {
	vote := &voters.Vote{
		Classes: []string{"leak", "sound"},
		Voters: []voters.Voter{
			&voters.Stump{Column: "age_years", Threshold: 41.5, Below: 1, Above: 0},
			&voters.CategoryStump{Column: "material", Level: "pvc", Equal: 1, Other: 0},
		},
		Weights: []float64{0.7, 0.3},
	}
	schema := []voters.ColumnSpec{
		{Name: "age_years", Kind: datasets.Numeric},
		{Name: "material", Kind: datasets.Categorical},
	}
	var b bytes.Buffer
	err := onnxexport.Write(&b, vote, schema, onnxexport.Options{
		ProducerVersion: "0.2.0",
		Metadata: []onnxexport.Property{
			{Key: "certificate", Value: "With probability at least 95% ..., at most 12.1%."},
			{Key: "delta", Value: "0.05"},
		},
	})
	if err != nil {
		log.Fatal(err)
	}
	for _, in := range onnxexport.Inputs(schema) {
		fmt.Printf("input %s: %s [N], missing as %q\n", in.Name, in.ElemType, in.Missing)
	}
	fmt.Println("outputs:", onnxexport.OutputClass, onnxexport.OutputIndex, onnxexport.OutputMargin, onnxexport.OutputTotals)
	fmt.Println("IR", onnxexport.IRVersion, "opset", onnxexport.Opset, "ai.onnx.ml", onnxexport.MLOpset)
	// Output:
	// input age_years: double [N], missing as "NaN"
	// input material: string [N], missing as ""
	// outputs: vote_class vote_class_index vote_margin vote_totals
	// IR 8 opset 17 ai.onnx.ml 2
}
