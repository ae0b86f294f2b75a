package model_test

import (
	"fmt"
	"math/cmplx"

	"vcz/recon/model"
)

// A uniform disc with a faint companion, written in the compact form: the
// squared visibility at the origin is 1 and drops on a long baseline.
func Example() {
	m, err := model.ParseCompact("ud:diameter=3;point:x=4,y=1,flux=0.05")
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, q := range []float64{0, 5e7, 1e8} { // cycles per radian
		v := m.Vis(q, 0)
		fmt.Printf("u=%.0e V2=%.4f\n", q, cmplx.Abs(v)*cmplx.Abs(v))
	}
	// Output:
	// u=0e+00 V2=1.0000
	// u=5e+07 V2=0.2492
	// u=1e+08 V2=0.0039
}

// Errors in a model name the component and the offending parameter.
func ExampleParseCompact_error() {
	_, err := model.ParseCompact("ud:diameter=3;gauss:fwhm=2,widht=1")
	fmt.Println(err)
	// Output:
	// model spec: component 2: gauss: unknown parameter "widht" (known: flux, x, y, fwhm, ratio, pa)
}

// Parameters are read and changed by name, in user units.
func ExampleComponent_Set() {
	c, _ := model.New(model.LinearLD, map[string]float64{"diameter": 4, "u_ld": 0.4})
	if err := c.Set("u_ld", 1.3); err != nil {
		fmt.Println(err)
	}
	d, _ := c.Get("diameter")
	fmt.Println(c.ParamNames(), d)
	// Output:
	// model: ld: parameter u_ld = 1.3 outside its domain [0, 1]
	// [flux x y diameter u_ld] 4
}
