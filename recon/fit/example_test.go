package fit_test

import (
	"fmt"
	"math"

	"vcz/dataset"
	"vcz/recon/fit"
	"vcz/recon/model"
)

// A uniform disc of 2.5 mas seen on a handful of baselines is fitted back
// from a start of 2 mas.
func Example() {
	truth, _ := model.Load("ud:diameter=2.5")
	d := &dataset.Data{}
	for k := 1; k <= 12; k++ {
		u, v := float64(k)*6e6, float64(k)*2e6 // cycles per radian
		w := truth.Vis(u, v)
		p := &d.Vis2
		p.U, p.V = append(p.U, u), append(p.V, v)
		p.Lambda, p.DLambda, p.MJD = append(p.Lambda, 1.6e-6), append(p.DLambda, 0), append(p.MJD, 0)
		p.Value = append(p.Value, real(w)*real(w)+imag(w)*imag(w))
		p.Err = append(p.Err, 0.01)
		p.Origin = append(p.Origin, dataset.Origin{})
	}
	start, err := model.Load("ud:diameter~2(0.5..6)")
	if err != nil {
		fmt.Println(err)
		return
	}
	res, err := fit.Fit(d, start, fit.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	p := res.Params[0]
	fmt.Printf("%s = %.4f mas, converged %v, χ² below 1e-12: %v\n", p.Ref, p.Value, res.Converged, res.Chi2 < 1e-12)
	fmt.Println("uncertainty finite:", !math.IsNaN(p.Err))
	// Output:
	// c1.diameter = 2.5000 mas, converged true, χ² below 1e-12: true
	// uncertainty finite: true
}

// The fitted model is written as a model file and read back.
func ExampleResult_ModelTOML() {
	truth, _ := model.Load("ud:diameter=2.5")
	d := &dataset.Data{}
	for k := 1; k <= 12; k++ {
		u, v := float64(k)*6e6, float64(k)*2e6
		w := truth.Vis(u, v)
		p := &d.Vis2
		p.U, p.V = append(p.U, u), append(p.V, v)
		p.Lambda, p.DLambda, p.MJD = append(p.Lambda, 1.6e-6), append(p.DLambda, 0), append(p.MJD, 0)
		p.Value = append(p.Value, real(w)*real(w)+imag(w)*imag(w))
		p.Err = append(p.Err, 0.01)
		p.Origin = append(p.Origin, dataset.Origin{})
	}
	start, _ := model.Load("ud:diameter~2(0.5..6)")
	res, err := fit.Fit(d, start, fit.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	back, err := model.ParseTOML(res.ModelTOML("uniform disc fit"), "fit.toml")
	if err != nil {
		fmt.Println(err)
		return
	}
	p := back.Components[0].Params()[3]
	fmt.Printf("%s %s = %.4f, free %v, bounds %g..%g\n", back.Components[0].Kind(), p.Name, p.Value, p.Free, p.Min, p.Max)
	// Output:
	// ud diameter = 2.5000, free true, bounds 0.5..6
}
