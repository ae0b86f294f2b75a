package optim

import (
	"fmt"
	"math"
	"testing"
)

// denoise returns f(x) = 0.5 ||x - b||^2 + mu sum_forward-differences (dx^2 + dy^2)
// on an n x n grid with a data image b that is negative on part of the
// grid, so that the bound x >= 0 is active there.
func denoise(n int, mu float64) (func(grad, x []float64) float64, []float64) {
	b := make([]float64, n*n)
	for iy := range n {
		for ix := range n {
			r := math.Hypot(float64(ix-n/2), float64(iy-n/2)) / float64(n)
			b[iy*n+ix] = math.Cos(12*r) + 0.3*math.Sin(float64(3*ix+7*iy))
		}
	}
	fn := func(grad, x []float64) float64 {
		var f float64
		for i := range x {
			r := x[i] - b[i]
			f += 0.5 * r * r
			grad[i] = r
		}
		for iy := range n {
			for ix := range n {
				i := iy*n + ix
				if ix+1 < n {
					d := x[i+1] - x[i]
					f += mu * d * d
					grad[i+1] += 2 * mu * d
					grad[i] -= 2 * mu * d
				}
				if iy+1 < n {
					d := x[i+n] - x[i]
					f += mu * d * d
					grad[i+n] += 2 * mu * d
					grad[i] -= 2 * mu * d
				}
			}
		}
		return f
	}
	return fn, b
}

// BenchmarkMinimizeBounded minimizes a 256 x 256 = 65536-variable
// smoothing problem with x >= 0, from a flat start, to the default
// tolerances.
func BenchmarkMinimizeBounded(b *testing.B) {
	const n = 256
	for _, mu := range []float64{1, 10} {
		b.Run(fmt.Sprintf("n=%d/mu=%g", n*n, mu), func(b *testing.B) {
			fn, _ := denoise(n, mu)
			x0 := make([]float64, n*n)
			for i := range x0 {
				x0[i] = 0.5
			}
			p := Problem{Func: fn, Lower: make([]float64, n*n)}
			var res Result
			b.ReportAllocs()
			for b.Loop() {
				var err error
				res, err = Minimize(p, x0, Settings{PGTol: 1e-6})
				if err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(res.Iter), "iter")
			b.ReportMetric(float64(res.Evals), "evals")
		})
	}
}

// BenchmarkIterationOverhead measures the cost of the method itself per
// iteration (direction, line search, update) on a problem whose Func is
// as cheap as possible: a separable quadratic with half of the bounds
// active, run for a fixed number of iterations.
func BenchmarkIterationOverhead(b *testing.B) {
	for _, n := range []int{96 * 96, 128 * 128, 256 * 256} {
		for _, m := range []int{5, 10} {
			for _, pattern := range []string{"coherent", "fragmented"} {
				b.Run(fmt.Sprintf("n=%d/memory=%d/%s", n, m, pattern), func(b *testing.B) {
					c := make([]float64, n)
					a := make([]float64, n)
					for i := range c {
						// Negative c puts the bound x >= 0 in force: on long
						// stretches (coherent) or every few variables (fragmented).
						c[i] = math.Sin(float64(i) * 6 / float64(n))
						if pattern == "fragmented" {
							c[i] = math.Sin(float64(i) * 0.37)
						}
						a[i] = 1 + 0.5*math.Cos(float64(i)*0.11)
					}
					fn := func(grad, x []float64) float64 {
						var f float64
						for i, xi := range x {
							r := xi - c[i]
							f += 0.5 * a[i] * r * r
							grad[i] = a[i] * r
						}
						return f
					}
					p := Problem{Func: fn, Lower: make([]float64, n)}
					x0 := make([]float64, n)
					const iters = 20
					s := Settings{MaxIter: iters, FTol: -1, PGTol: -1, Memory: m}
					b.ReportAllocs()
					for b.Loop() {
						res, err := Minimize(p, x0, s)
						if err != nil || res.Iter != iters {
							b.Fatal(err, res.Status)
						}
					}
					b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*iters), "ns/iter")
				})
			}
		}
	}
}
