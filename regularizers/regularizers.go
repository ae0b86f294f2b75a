package regularizers

import "fmt"

// Regularizer is the method every regularizer of this package has. Eval
// returns the value at the image x (row-major, x[iy*NX+ix]) and, when grad
// is non-nil, overwrites grad with the gradient. Wrong slice lengths
// panic.
type Regularizer interface {
	Eval(grad, x []float64) float64
}

// checkLen panics with a package-prefixed message when x or a non-nil
// grad does not hold nx*ny pixels.
func checkLen(name string, nx, ny int, grad, x []float64) {
	if nx <= 0 || ny <= 0 {
		panic(fmt.Sprintf("regularizers: %s: grid %dx%d is empty", name, nx, ny))
	}
	if len(x) != nx*ny {
		panic(fmt.Sprintf("regularizers: %s: len(x) = %d, want NX*NY = %d", name, len(x), nx*ny))
	}
	if grad != nil && len(grad) != nx*ny {
		panic(fmt.Sprintf("regularizers: %s: len(grad) = %d, want NX*NY = %d", name, len(grad), nx*ny))
	}
}

// Term is one weighted regularizer of a Sum.
type Term struct {
	Weight float64
	R      Regularizer
}

// Sum is the weighted combination sum_k Weight_k R_k(x).
//
// Sum keeps a scratch gradient in the struct, allocated on the first Eval
// with a gradient and reused afterwards, so a Sum must not be used by
// several goroutines at once.
type Sum struct {
	Terms []Term

	scratch []float64
}

// Eval returns sum_k Weight_k R_k(x) and, when grad is non-nil, writes
// its gradient to grad. Terms with a zero weight are skipped.
func (s *Sum) Eval(grad, x []float64) float64 {
	if grad != nil && len(grad) != len(x) {
		panic(fmt.Sprintf("regularizers: Sum: len(grad) = %d, want len(x) = %d", len(grad), len(x)))
	}
	if grad == nil {
		var v float64
		for _, t := range s.Terms {
			if t.Weight != 0 {
				v += t.Weight * t.R.Eval(nil, x)
			}
		}
		return v
	}
	if cap(s.scratch) < len(x) {
		s.scratch = make([]float64, len(x))
	}
	tmp := s.scratch[:len(x)]
	for i := range grad {
		grad[i] = 0
	}
	var v float64
	for _, t := range s.Terms {
		if t.Weight == 0 {
			continue
		}
		v += t.Weight * t.R.Eval(tmp, x)
		for i, g := range tmp {
			grad[i] += t.Weight * g
		}
	}
	return v
}

// String lists the weighted terms, e.g. "0.5*tv(eps=0.01)+2*smooth".
func (s *Sum) String() string {
	out := ""
	for k, t := range s.Terms {
		if k > 0 {
			out += "+"
		}
		out += fmt.Sprintf("%g*%v", t.Weight, t.R)
	}
	return out
}
