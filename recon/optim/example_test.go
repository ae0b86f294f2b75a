package optim_test

import (
	"fmt"

	"vcz/recon/optim"
)

// Minimize (x0 - 2)^2 + (x1 + 1)^2 with x >= 0: the bound holds x1 at 0
// and x0 reaches its unconstrained optimum 2.
func ExampleMinimize() {
	p := optim.Problem{
		Func: func(grad, x []float64) float64 {
			if grad != nil {
				grad[0] = 2 * (x[0] - 2)
				grad[1] = 2 * (x[1] + 1)
			}
			return (x[0]-2)*(x[0]-2) + (x[1]+1)*(x[1]+1)
		},
		Lower: []float64{0, 0},
	}
	res, err := optim.Minimize(p, []float64{1, 1}, optim.Settings{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("x = [%.6f %.6f], f = %.6f\n", res.X[0], res.X[1], res.F)
	fmt.Println(res.Status)
	// Output:
	// x = [2.000000 0.000000], f = 1.000000
	// converged: projected gradient below tolerance
}
