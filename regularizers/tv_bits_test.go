package regularizers

import (
	"math"
	"math/rand/v2"
	"testing"
)

// tvReference is TV.Eval as a plain pixel loop that adds each term's three
// gradient contributions into a zeroed gradient. Eval must give its bits.
func tvReference(r *TV, grad, x []float64) float64 {
	nx, ny := r.NX, r.NY
	e := r.E()
	e2 := e * e
	if grad != nil {
		for i := range grad {
			grad[i] = 0
		}
	}
	var v float64
	for iy := range ny {
		for ix := range nx {
			i := iy*nx + ix
			dx, dy := diffs(x, nx, ny, ix, iy, i)
			s := math.Sqrt(dx*dx + dy*dy + e2)
			v += s
			if grad != nil && s > 0 {
				t := 1 / s
				grad[i] -= (dx + dy) * t
				if ix+1 < nx {
					grad[i+1] += dx * t
				}
				if iy+1 < ny {
					grad[i+nx] += dy * t
				}
			}
		}
	}
	return v
}

// sameBits reports whether a and b have the same IEEE 754 bits (NaN payloads included).
func sameBits(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

// TestTVSameBits checks that Eval's value and gradient have the bits of the pixel loop
// tvReference, on images with the values a bounded reconstruction holds: exact zeros and
// negative zeros (pixels held at a lower bound of 0), an upper bound, flat patches, tiny
// and huge values, and NaN and infinite pixels, which Eval skips as the loop does.
func TestTVSameBits(t *testing.T) {
	rnd := rand.New(rand.NewPCG(25, 19))
	sizes := [][2]int{{1, 1}, {1, 7}, {7, 1}, {2, 2}, {9, 6}, {6, 9}, {33, 17}, {96, 96}, {129, 3}, {130, 4}, {300, 3}}
	kinds := []string{"uniform", "bounded", "signed zeros", "flat", "scales", "nan", "inf"}
	for _, sz := range sizes {
		nx, ny := sz[0], sz[1]
		for _, kind := range kinds {
			for _, reg := range []*TV{{NX: nx, NY: ny}, {NX: nx, NY: ny, Eps: 0.3, Mean: 2.5},
				{NX: nx, NY: ny, Eps: 1e-200, Mean: 1e-200}} { // e² underflows to 0
				x := make([]float64, nx*ny)
				for i := range x {
					u := rnd.Float64()
					switch kind {
					case "uniform":
						x[i] = u / float64(nx*ny)
					case "bounded":
						x[i] = min(max(2*u-0.5, 0), 1)
					case "signed zeros":
						x[i] = []float64{0, math.Copysign(0, -1), u, -u}[rnd.IntN(4)]
					case "flat":
						x[i] = float64(rnd.IntN(2)) * 0.25
					case "scales":
						x[i] = u * math.Pow(10, float64(rnd.IntN(600)-300))
					case "nan", "inf":
						x[i] = u
					}
				}
				if kind == "nan" || kind == "inf" {
					bad := math.NaN()
					if kind == "inf" {
						bad = math.Inf(1 - 2*rnd.IntN(2))
					}
					x[rnd.IntN(len(x))] = bad
				}
				want := make([]float64, len(x))
				got := make([]float64, len(x))
				for i := range got {
					got[i] = 1e300 // overwritten
				}
				vw := tvReference(reg, want, x)
				vg := reg.Eval(got, x)
				vn := reg.Eval(nil, x)
				if !sameBits(vg, vw) || !sameBits(vn, vw) {
					t.Errorf("%dx%d %s e=%g: value %x (no gradient %x), reference %x", nx, ny, kind, reg.E(),
						math.Float64bits(vg), math.Float64bits(vn), math.Float64bits(vw))
				}
				// Both one-pass forms, whichever Eval picks in this build: each must
				// give the reference's bits or give up (false) on a term it skips.
				e := reg.E()
				for name, f := range map[string]func(grad, x []float64, nx, ny int, e2 float64) (float64, bool){
					"tvGrad": tvGrad, "tvGradScalar": tvGradScalar} {
					g := make([]float64, len(x))
					v, ok := f(g, x, nx, ny, e*e)
					if !ok {
						if kind != "nan" && kind != "inf" && e != 0 {
							t.Errorf("%dx%d %s e=%g: %s gave up", nx, ny, kind, e, name)
						}
						continue
					}
					if !sameBits(v, vw) {
						t.Errorf("%dx%d %s e=%g: %s value %x, reference %x", nx, ny, kind, e, name,
							math.Float64bits(v), math.Float64bits(vw))
					}
					for i := range want {
						if !sameBits(g[i], want[i]) {
							t.Errorf("%dx%d %s e=%g: %s grad[%d] = %g (%x), reference %g (%x)", nx, ny, kind, e,
								name, i, g[i], math.Float64bits(g[i]), want[i], math.Float64bits(want[i]))
							break
						}
					}
				}
				for i := range want {
					if !sameBits(got[i], want[i]) {
						t.Errorf("%dx%d %s e=%g: grad[%d] = %g (%x), reference %g (%x)", nx, ny, kind, reg.E(),
							i, got[i], math.Float64bits(got[i]), want[i], math.Float64bits(want[i]))
						break
					}
				}
			}
		}
	}
}

// TestRowTermsAVX checks that the assembly form of rowTerms, where the processor has it, gives
// the bits of the Go loop (IEEE 754 requires every operation correctly rounded), on pixels over
// the whole range, subnormals, signed zeros, negatives, NaN and infinities, and e² from 0 up.
func TestRowTermsAVX(t *testing.T) {
	if !hasTVAVX {
		t.Skip("no AVX form in this build or on this processor")
	}
	rnd := rand.New(rand.NewPCG(4, 25))
	special := []float64{0, math.Copysign(0, -1), -1, math.NaN(), math.Inf(1), math.Inf(-1),
		5e-324, math.SmallestNonzeroFloat64 * 3, math.MaxFloat64, 1e-310, 4, 2}
	for trial := range 300 {
		n := 4 * (1 + rnd.IntN(tvChunk/4))
		row := make([]float64, n+1)
		below := make([]float64, n)
		for _, v := range [][]float64{row, below} {
			for k := range v {
				if rnd.IntN(8) == 0 {
					v[k] = special[rnd.IntN(len(special))]
				} else {
					v[k] = (rnd.Float64() - 0.2) * math.Pow(2, float64(rnd.IntN(600)-300))
				}
			}
		}
		e2 := []float64{0, 1e-4, 1e-300, 3}[trial%4]
		var want, got tvTerms
		rowTermsGo(&want, row, below, 0, e2)
		rowTermsAVX(&got, &row[0], &below[0], n, e2)
		for k := range n {
			w := [4]float64{want.s[k], want.dxt[k], want.dyt[k], want.ct[k]}
			g := [4]float64{got.s[k], got.dxt[k], got.dyt[k], got.ct[k]}
			for j := range w {
				if !sameBits(g[j], w[j]) && !(math.IsNaN(g[j]) && math.IsNaN(w[j])) {
					t.Fatalf("trial %d, pixel %d, term %d: AVX %g (%x), Go %g (%x)", trial, k, j,
						g[j], math.Float64bits(g[j]), w[j], math.Float64bits(w[j]))
				}
			}
		}
	}
}
