package nufft

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

func TestQuick(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	nx, ny, m := 32, 24, 500
	pix := 1e-8
	u := make([]float64, m)
	v := make([]float64, m)
	for k := range u {
		u[k] = (rng.Float64() - 0.5) / pix
		v[k] = (rng.Float64() - 0.5) / pix
	}
	img := make([]float64, nx*ny)
	for i := range img {
		img[i] = rng.NormFloat64()
	}
	for _, kind := range []kernelKind{kaiserBessel, expSemicircle} {
		for w := 2; w <= 16; w++ {
			r, _ := resolve("x", nx, ny, pix, u, v, Options{Workers: 1})
			p := &Plan{newPlan(r, u, v, kind, w)}
			e, _ := NewExact(nx, ny, pix, u, v, Options{})
			a := make([]complex128, m)
			b := make([]complex128, m)
			p.Forward(a, img)
			e.Forward(b, img)
			var num, den float64
			for k := range a {
				num += sq(cmplx.Abs(a[k] - b[k]))
				den += sq(cmplx.Abs(b[k]))
			}
			ia := make([]float64, nx*ny)
			ib := make([]float64, nx*ny)
			p.Adjoint(ia, b)
			e.Adjoint(ib, b)
			var n2, d2 float64
			for k := range ia {
				n2 += sq(ia[k] - ib[k])
				d2 += sq(ib[k])
			}
			t.Logf("kind %d w %d fwd %.3g adj %.3g", kind, w, math.Sqrt(num/den), math.Sqrt(n2/d2))
		}
	}
}
