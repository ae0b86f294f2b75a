package recon

import (
	"fmt"

	"vcz/dataset"
	"vcz/nufft"
)

// Transform is the linear map between an image and complex visibilities at fixed (u,v) points,
// as nufft.Transform defines it: Forward(dst, img) sets dst[k] = Σ_p img[p]·exp(−2πi(u_k x_p +
// v_k y_p)) and Adjoint(dst, vis) sets dst[p] = Re Σ_k vis[k]·exp(+2πi(u_k x_p + v_k y_p)).
type Transform interface {
	Forward(dst []complex128, img []float64)
	Adjoint(dst []float64, vis []complex128)
}

// sortedTransform is a Transform that also takes and gives the visibilities in an order of
// its own points (nufft.Plan): Order(dst) sets dst[i] to the index, among the points it was
// made for, of its i-th point, and ForwardSorted and AdjointSorted are Forward and Adjoint
// with the visibilities in that order, to the bit. A forward model keeps its visibilities in
// that order, so that the transform does not permute them at every call.
type sortedTransform interface {
	Transform
	Order(dst []int)
	ForwardSorted(dst []complex128, img []float64)
	AdjointSorted(dst []float64, vis []complex128)
}

// TransformFunc makes a Transform for an n×n grid of the given pixel (rad) and (u,v) points
// (cycles/rad). NewTransform is the default.
type TransformFunc func(n int, pixel float64, u, v []float64) (Transform, error)

// NewTransform returns nufft.New with default options: the faster of the direct sum and the
// gridding transform, accurate to 1e-6.
func NewTransform(workers int) TransformFunc {
	return func(n int, pixel float64, u, v []float64) (Transform, error) {
		return nufft.New(n, n, pixel, u, v, nufft.Options{Workers: workers})
	}
}

// setSerial makes the model's transform run its calls on the calling goroutine alone (on) or
// on its workers again (off), where the transform allows it (nufft.Plan.SetSerial): for a
// caller that runs several models at once, one per processor. Results do not change.
func (m *ForwardModel) setSerial(on bool) {
	if s, ok := m.tr.(interface{ SetSerial(bool) }); ok {
		s.SetSerial(on)
	}
}

// ForwardModel is the forward model of a gray image: the normalised complex visibility
// V(u,v) = Σ x_p exp(−2πi(u x_p + v y_p)) / Σ x_p at every distinct (u,v) point of a data set,
// computed with one transform. It holds the buffers of one evaluation and is not safe for
// concurrent use.
type ForwardModel struct {
	Grid
	sampling // the distinct points U, V and the points each datum sees

	tr Transform
	// st is tr when it works in its own order of the points (sortedTransform), nil
	// otherwise: the points of the sampling (or the sub-points of smearing) are then held
	// in its order.
	st   sortedTransform
	norm bool         // divide by the total flux
	flux float64      // Σ x of the last Forward
	vis  []complex128 // model visibilities at U, V of the last Forward
	gvis []complex128 // accumulated ∂J/∂Re V + i ∂J/∂Im V
	adj  []float64
	xs   []float64 // the image times (−1)^(ix − N/2), which the transform takes (halfShift)

	smear     *smearing // the band averages, nil without smearing (smear.go)
	smearInfo SmearInfo
}

// NewForwardModel collects the distinct (u,v) points of all data of d, deduplicating baselines that
// coincide (exactly or to 1e-9 of the longest baseline, and with either sign), and makes one
// transform for them with mk (nil means NewTransform(0)). With normalize false the model is
// Σ x_p exp(...) without division by the flux, for images whose flux is known (the convex
// complex-visibility case). Bandwidth smearing is modelled where it exceeds the noise
// (SmearAuto; NewForwardModelWith chooses).
func NewForwardModel(d *dataset.Data, g Grid, normalize bool, mk TransformFunc) (*ForwardModel, error) {
	return NewForwardModelWith(d, g, normalize, mk, ModelOptions{})
}

// NewForwardModelWith is NewForwardModel with the options opt.
func NewForwardModelWith(d *dataset.Data, g Grid, normalize bool, mk TransformFunc, opt ModelOptions) (*ForwardModel, error) {
	if g.N < 2 || !(g.Pixel > 0) {
		return nil, fmt.Errorf("recon: grid %d × %d of %g rad is not usable", g.N, g.N, g.Pixel)
	}
	if mk == nil {
		mk = NewTransform(0)
	}
	m := &ForwardModel{Grid: g, norm: normalize, sampling: newSampling(d, nil)}
	if len(m.U) == 0 {
		return nil, fmt.Errorf("recon: the data set has no (u,v) points")
	}
	u, v := m.U, m.V
	if m.smear, m.smearInfo = newSmearing(d, &m.sampling, g, opt); m.smear != nil {
		u, v = m.smear.u, m.smear.v
	}
	us := make([]float64, len(u))
	for k, uk := range u {
		us[k] = uk - halfShift(g.Pixel)
	}
	tr, err := mk(g.N, g.Pixel, us, v)
	if err != nil {
		return nil, fmt.Errorf("recon: making the transform: %w", err)
	}
	m.tr = tr
	if st, ok := tr.(sortedTransform); ok {
		m.st = st
		order := make([]int, len(u))
		st.Order(order)
		if m.smear != nil {
			m.smear.reorder(order)
		} else {
			m.sampling.reorder(order)
		}
	}
	m.vis = make([]complex128, len(m.U))
	m.gvis = make([]complex128, len(m.U))
	m.adj = make([]float64, g.N*g.N)
	m.xs = make([]float64, g.N*g.N)
	return m, nil
}

// halfShift is the shift of u, half a period of the pixel grid, with which the forward model
// calls its transform. For pixel (ix, iy) at x = −(ix − N/2)·pixel (CONVENTIONS.md),
// exp(−2πi(u − 1/(2·pixel))x) = exp(−2πi u x)·(−1)^(ix − N/2), so that the transform at
// u − 1/(2·pixel) of the image times (−1)^(ix − N/2) is the visibility at u, and the adjoint
// at the shifted points times (−1)^(ix − N/2) is the adjoint at u (the factor is ±1, its own
// inverse, exact in floating point). The shift keeps the points, which the sampling holds at
// u ≥ 0 and which lie within a quarter period of u = 0 on any grid that samples the data,
// away from the frequency where a gridding transform's kernel wraps around the edge of its
// grid: nufft.Plan evaluates such points in a general loop several times slower than the
// others (measured on the night of BenchmarkImageNight, 128²: a fifth of the time of the
// reconstruction, and Forward plus Adjoint 16–21 % faster with the shift).
func halfShift(pixel float64) float64 { return 0.5 / pixel }

// Forward computes the model visibilities of image x (len N²) at the distinct points and
// returns the total flux Σ x. With normalisation on, the visibilities are divided by the flux;
// a flux that is zero or not finite leaves them non-finite, and the caller reports it.
func (m *ForwardModel) Forward(x []float64) float64 {
	if len(x) != m.N*m.N {
		panic(fmt.Sprintf("recon: image has %d pixels, grid has %d", len(x), m.N*m.N))
	}
	f := m.shift(x)
	m.forward(f)
	return f
}

// shift sets m.xs to x times (−1)^(ix − N/2) at each pixel (ix, iy), which the transform of
// the shifted points takes (halfShift), and returns the flux Σ x, summed in the order of the
// pixels, in the same pass. x must have N² pixels.
func (m *ForwardModel) shift(x []float64) float64 {
	n := m.N
	xs := m.xs[:len(x)]
	s0 := 1.0
	if (n/2)%2 != 0 {
		s0 = -1 // the sign at ix = 0
	}
	f := 0.0
	for iy := 0; iy < n; iy++ {
		row, out := x[iy*n:iy*n+n], xs[iy*n:iy*n+n]
		out = out[:len(row)]
		s := s0
		for ix, v := range row {
			f += v
			out[ix] = s * v
			s = -s
		}
	}
	return f
}

// forward is Forward after shift: the image is in m.xs and f is its flux.
func (m *ForwardModel) forward(f float64) {
	m.flux = f
	m.transform()
	if m.norm {
		s := 1 / f
		for k, v := range m.vis {
			m.vis[k] = complex(real(v)*s, imag(v)*s)
		}
	}
	clear(m.gvis)
}

// at returns the model visibility seen by a datum (valid after Forward).
func (m *ForwardModel) at(r ref) complex128 { return at(m.vis, r) }

// Gradient turns the accumulated visibility derivatives into the gradient with respect to the
// image and writes it to grad. With V = A x / F and F = Σ x,
//
//	∂J/∂x_p = (Re Σ_k conj(G_k)·a_kp − Re Σ_k conj(G_k)·V_k) / F,
//
// where Re Σ conj(G_k)·a_kp is the adjoint transform of G. Without normalisation only the first
// term remains, undivided.
func (m *ForwardModel) Gradient(grad []float64) { m.gradient(grad, nil) }

// gradExtra is a gradient added to the data terms' in the same pass over the image (the
// regularizer and the flux term of Solve's objective): s·(r_p − c) + add at pixel p, or add
// alone when r is nil.
type gradExtra struct {
	s, c, add float64
	r         []float64
}

// gradient is Gradient with the extra gradient ex (nil for none) added to each pixel.
func (m *ForwardModel) gradient(grad []float64, ex *gradExtra) {
	cm := 0.0
	if m.norm {
		for k, g := range m.gvis {
			v := m.vis[k]
			cm += real(g)*real(v) + imag(g)*imag(v)
		}
	}
	m.gradientWith(grad, ex, cm)
}

// gradientWith is gradient with cm = Re Σ_k conj(G_k)·V_k already summed, in the order of
// gradient (0 without normalisation). The sign (−1)^(ix − N/2) of the shifted points
// (halfShift) is applied in the same pass, exactly (the factor is ±1).
func (m *ForwardModel) gradientWith(grad []float64, ex *gradExtra, cm float64) {
	m.adjoint() // through the sub-samples of smearing when it is on
	n := m.N
	adj := m.adj[:len(grad)]
	inv := 1.0
	if m.norm {
		inv = 1 / m.flux
	}
	s0 := 1.0
	if (n/2)%2 != 0 {
		s0 = -1 // the sign at ix = 0
	}
	if ex != nil && ex.r != nil && n%2 == 0 && hasPixelAVX {
		// The case of a regularizer, four pixels at a time: with n even the sign at pixel i of
		// the whole image is s0·(−1)^i, as each row starts with s0. The same operations in the
		// same order, so the same bits (TestGradRegAVX).
		r := ex.r[:len(adj)]
		k := len(adj) &^ 3
		if k > 0 {
			gradRegAVX(grad, adj, r, s0, cm, inv, ex.s, ex.c, ex.add)
		}
		for i := k; i < len(adj); i++ {
			s := s0
			if i%2 != 0 {
				s = -s0
			}
			grad[i] = (s*adj[i]-cm)*inv + ex.s*(r[i]-ex.c) + ex.add
		}
		return
	}
	for iy := 0; iy < n; iy++ {
		row, out := adj[iy*n:iy*n+n], grad[iy*n:iy*n+n]
		out = out[:len(row)]
		s := s0
		switch {
		case ex == nil && !m.norm:
			for ix, a := range row {
				out[ix] = s * a
				s = -s
			}
		case ex == nil:
			for ix, a := range row {
				out[ix] = (s*a - cm) * inv
				s = -s
			}
		case ex.r == nil:
			for ix, a := range row {
				out[ix] = (s*a-cm)*inv + ex.add
				s = -s
			}
		default:
			r := ex.r[iy*n : iy*n+n]
			r = r[:len(row)]
			sc, c, add := ex.s, ex.c, ex.add
			for ix, a := range row {
				out[ix] = (s*a-cm)*inv + sc*(r[ix]-c) + add
				s = -s
			}
		}
	}
}
