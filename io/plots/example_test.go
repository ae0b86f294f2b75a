package plots_test

import (
	"fmt"

	"vcz/io/plots"
)

func ExampleLongestBaseline() {
	// A triangle with baselines (3, 4) and (1, 0) Mλ: its third side is
	// (4, 4), of length 4√2.
	fmt.Printf("%.4f\n", plots.LongestBaseline(3, 4, 1, 0))
	// Output: 5.6569
}

func ExamplePhaseResiduals() {
	r := plots.PhaseResiduals(nil, []float64{179, 30}, []float64{-179, 20}, []float64{2, 5})
	fmt.Println(r)
	// Output: [-1 2]
}

func ExampleV2() {
	// Squared visibilities of three points with a model, 800 × 600 PNG.
	d := plots.V2Data{
		U:     []float64{1e7, 2e7, 3e7},
		V:     []float64{0, 1e7, 2e7},
		Value: []float64{0.9, 0.6, 0.3},
		Err:   []float64{0.05, 0.05, 0.05},
	}
	f, err := plots.V2(d, []plots.ModelValues{{Name: "model", Value: []float64{0.88, 0.62, 0.31}}}, nil, plots.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(f.Size())
	_, err = plots.V2(plots.V2Data{}, nil, nil, plots.Options{})
	fmt.Println(err)
	// Output:
	// 800 600
	// plots: V²: no finite data to plot
}
