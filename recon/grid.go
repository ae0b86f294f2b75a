package recon

import (
	"errors"
	"fmt"
	"math"

	"vcz/dataset"
	"vcz/recon/model"
)

// Grid is a square image grid: N×N pixels of Pixel radians, laid out as CONVENTIONS.md says.
type Grid struct {
	N     int
	Pixel float64 // rad
}

// GridOptions overrides parts of the grid choice. Its zero value gives the defaults.
type GridOptions struct {
	// Pixel, when positive, is the pixel size (rad); otherwise PixelFraction of the nominal
	// resolution.
	Pixel float64
	// N, when positive, is the number of pixels along each axis (rounded up to an even number).
	N int
	// PixelFraction is the pixel size as a fraction of λmin/(2·Bmax); 0 means 1/4, in the middle
	// of the third-to-a-fifth range of CONVENTIONS.md (common practice, no source).
	PixelFraction float64
	// FOVFactor is the field of view in units of the fitted object size; 0 means 3.
	FOVFactor float64
	// MinN and MaxN bound N when it is chosen; 0 means 32 and 256. When the field of view needs
	// more than MaxN pixels the pixel is enlarged instead, and the reasoning says so.
	MinN, MaxN int
	// ObjectSize, when positive, is the object's size (rad, a diameter) known to the caller,
	// e.g. from a fitted model; it replaces the V² fit of the size, and ObjectSource names
	// where it came from in the reasoning. A field of view capped at the largest constrained
	// scale is still kept at 1.25 times ObjectSize or more, so that the object is inside.
	// ObjectSource with a zero ObjectSize (a source without extent) is named in the reasoning
	// and the V² fit used.
	ObjectSize   float64
	ObjectSource string
}

// GridChoice is a grid with the figures and reasoning behind it, for printing.
type GridChoice struct {
	Grid
	FOV          float64 // N·Pixel (rad)
	Resolution   float64 // λmin/(2·Bmax) (rad)
	LargestScale float64 // λmax/Bmin (rad)
	// SizeModel is "uniform disc" or "Gaussian", the model that fitted the V² data best, and
	// Size its diameter or FWHM (rad); Size is 0 when no V² data were there to fit. With
	// GridOptions.ObjectSize set they are ObjectSource and ObjectSize.
	SizeModel string
	Size      float64
	// Reasons lists the steps of the choice, one sentence each.
	Reasons []string
}

// Friendly reports whether n is even and has no prime factor other than 2, 3 and 5, the sizes
// FFT libraries handle at full speed (common practice, no source).
func Friendly(n int) bool {
	if n <= 0 || n%2 != 0 {
		return false
	}
	for _, p := range []int{2, 3, 5} {
		for n%p == 0 {
			n /= p
		}
	}
	return n == 1
}

// nextFriendly returns the smallest n' >= n with Friendly(n').
func nextFriendly(n int) int {
	if n < 2 {
		n = 2
	}
	for !Friendly(n) {
		n++
	}
	return n
}

// ChooseGrid picks a grid for a data set: the pixel is a quarter of the nominal resolution
// λmin/(2·Bmax); the field of view is three times the object's size, estimated by fitting a
// uniform disc and a Gaussian to the V² data (a 1-D least-squares fit of the diameter or FWHM,
// keeping the better model) unless opt.ObjectSize gives it, and at most the largest
// constrained scale λmax/Bmin (but not less than 1.25 × ObjectSize when given); N is the
// smallest count at least that field over the pixel that is even with no prime factor above
// 5 (Friendly), between MinN and MaxN, so the rounding up of N can take the field beyond
// λmax/Bmin (by up to a fifth above MinN = 32: a field of just over 40 pixels gets 48), and the
// reasoning then says by how much. Every step can be overridden through opt, and the
// reasoning is returned for printing.
func ChooseGrid(d *dataset.Data, opt GridOptions) (GridChoice, error) {
	var g GridChoice
	s := d.Summarize()
	if s.BaselineMax <= 0 {
		return g, errors.New("recon: no baselines to choose a grid from")
	}
	g.Resolution, g.LargestScale = s.Resolution, s.LargestScale
	frac := opt.PixelFraction
	if frac <= 0 {
		frac = 0.25
	}
	factor := opt.FOVFactor
	if factor <= 0 {
		factor = 3
	}
	minN, maxN := opt.MinN, opt.MaxN
	if minN <= 0 {
		minN = 32
	}
	if maxN <= 0 {
		maxN = 256
	}
	if minN > maxN {
		minN = maxN
	}
	g.Pixel = frac * g.Resolution
	if opt.Pixel > 0 {
		g.Pixel = opt.Pixel
		g.Reasons = append(g.Reasons, fmt.Sprintf("pixel %.4g mas as requested", g.Pixel/Mas))
	} else {
		g.Reasons = append(g.Reasons, fmt.Sprintf("pixel %.4g mas = %.3g × resolution λmin/(2·Bmax) = %.4g mas", g.Pixel/Mas, frac, g.Resolution/Mas))
	}
	if opt.N > 0 {
		g.N = opt.N + opt.N%2
		g.Reasons = append(g.Reasons, fmt.Sprintf("%d × %d pixels as requested", g.N, g.N))
		g.FOV = float64(g.N) * g.Pixel
		return g, nil
	}
	fov := 0.0
	if opt.ObjectSize > 0 {
		src := opt.ObjectSource
		if src == "" {
			src = "given"
		}
		g.SizeModel, g.Size = src, opt.ObjectSize
		fov = factor * opt.ObjectSize
		g.Reasons = append(g.Reasons, fmt.Sprintf("%s: object size %.4g mas; field of view %.3g × that = %.4g mas", src, opt.ObjectSize/Mas, factor, fov/Mas))
	} else if model, size, ok := fitSize(d); ok {
		if opt.ObjectSource != "" {
			g.Reasons = append(g.Reasons, fmt.Sprintf("%s: no extent (a point at the centre); the size comes from the V² fit", opt.ObjectSource))
		}
		g.SizeModel, g.Size = model, size
		fov = factor * size
		g.Reasons = append(g.Reasons, fmt.Sprintf("V² fit: %s of %.4g mas; field of view %.3g × that = %.4g mas", model, size/Mas, factor, fov/Mas))
	} else {
		fov = g.LargestScale
		g.Reasons = append(g.Reasons, "no V² data to estimate the object's size; field of view = largest scale")
	}
	if g.LargestScale > 0 && fov > g.LargestScale {
		if keep := 1.25 * opt.ObjectSize; keep > g.LargestScale {
			fov = keep
			g.Reasons = append(g.Reasons, fmt.Sprintf("field of view %.4g mas, 1.25 × the object size, beyond the largest constrained scale λmax/Bmin = %.4g mas so that the object is inside", fov/Mas, g.LargestScale/Mas))
		} else {
			fov = g.LargestScale
			g.Reasons = append(g.Reasons, fmt.Sprintf("field of view capped at the largest constrained scale λmax/Bmin = %.4g mas before the pixel count is rounded up", g.LargestScale/Mas))
		}
	}
	capped := g.LargestScale > 0 && fov <= g.LargestScale*(1+1e-9)
	raised := false
	// The count is compared as a float first: a tiny requested pixel would
	// overflow the conversion to int.
	n := maxN + 1
	if nf := math.Ceil(fov/g.Pixel - 1e-9); nf <= float64(maxN) {
		n = int(nf)
	}
	switch {
	case n < minN:
		n, raised = minN, true
		g.Reasons = append(g.Reasons, fmt.Sprintf("raised to the minimum of %d pixels", minN))
	case n > maxN:
		if opt.Pixel <= 0 {
			g.Pixel = fov / float64(maxN)
			g.Reasons = append(g.Reasons, fmt.Sprintf("limited to %d pixels by enlarging the pixel to %.4g mas", maxN, g.Pixel/Mas))
		} else {
			g.Reasons = append(g.Reasons, fmt.Sprintf("limited to %d pixels; the field of view is smaller than wanted", maxN))
		}
		n = maxN
	}
	g.N = nextFriendly(n)
	if g.N > maxN && maxN >= 2 { // maxN itself may not be friendly: take the largest friendly below
		for g.N = maxN - maxN%2; g.N > 2 && !Friendly(g.N); g.N -= 2 {
		}
	}
	g.FOV = float64(g.N) * g.Pixel
	why := fmt.Sprintf("%d × %d pixels (even, factors 2, 3, 5 only): field of view %.4g mas", g.N, g.N, g.FOV/Mas)
	if capped && g.FOV > g.LargestScale*(1+1e-9) {
		// The field was within λmax/Bmin before the count was rounded: say by how much the
		// rounding (or the minimum count) took it beyond.
		cause := "by the rounding up of the pixel count"
		if raised {
			cause = fmt.Sprintf("by the minimum of %d pixels", minN)
		}
		why += fmt.Sprintf(", %.2g %% beyond λmax/Bmin %s", 100*(g.FOV/g.LargestScale-1), cause)
	}
	g.Reasons = append(g.Reasons, why)
	return g, nil
}

// Mas is one milliarcsecond in radians.
const Mas = math.Pi / (180 * 3600 * 1000)

// fitSize fits a uniform disc and a Gaussian to the V² data by 1-D least squares on the
// diameter (FWHM) and returns the better model and the object size: the disc diameter or twice
// the Gaussian FWHM (which holds all but 1/16 of the peak). At most 2000 points are used, taken
// at a regular stride, which is plenty for one parameter.
func fitSize(d *dataset.Data) (string, float64, bool) {
	p := &d.Vis2
	n := p.Len()
	if n == 0 {
		return "", 0, false
	}
	stride := 1 + n/2000
	var q, val, w []float64
	qmax, qmin := 0.0, math.Inf(1)
	for i := 0; i < n; i += stride {
		f := math.Hypot(p.U[i], p.V[i])
		q = append(q, f)
		val = append(val, p.Value[i])
		w = append(w, 1/(p.Err[i]*p.Err[i]))
		qmax = math.Max(qmax, f)
		if f > 0 {
			qmin = math.Min(qmin, f)
		}
	}
	if qmax == 0 {
		return "", 0, false
	}
	chi2 := func(vis func(float64, float64) float64, th float64) float64 {
		s := 0.0
		for i := range q {
			m := vis(th, q[i])
			r := m*m - val[i]
			s += r * r * w[i]
		}
		return s
	}
	// The search runs from 0.01/qmax, below which the object is unresolved on every baseline,
	// to 3/qmin, above which it is resolved out (past the first null of the disc at
	// θ·q = 1.22) on every baseline.
	lo, hi := 0.01/qmax, 3/qmin
	best := func(vis func(float64, float64) float64) (float64, float64) {
		const m = 240
		bi, bc := 0, math.Inf(1)
		for k := 0; k <= m; k++ {
			th := lo * math.Pow(hi/lo, float64(k)/m)
			if c := chi2(vis, th); c < bc {
				bi, bc = k, c
			}
		}
		a := lo * math.Pow(hi/lo, float64(max(bi-1, 0))/m)
		b := lo * math.Pow(hi/lo, float64(min(bi+1, m))/m)
		// Golden-section refinement on [a, b].
		const gr = 0.6180339887498949
		x1, x2 := b-gr*(b-a), a+gr*(b-a)
		f1, f2 := chi2(vis, x1), chi2(vis, x2)
		for it := 0; it < 60 && b-a > 1e-6*b; it++ {
			if f1 < f2 {
				b, x2, f2 = x2, x1, f1
				x1 = b - gr*(b-a)
				f1 = chi2(vis, x1)
			} else {
				a, x1, f1 = x1, x2, f2
				x2 = a + gr*(b-a)
				f2 = chi2(vis, x2)
			}
		}
		th := (a + b) / 2
		return th, chi2(vis, th)
	}
	tu, cu := best(model.UniformDiscV)
	tg, cg := best(model.GaussianV)
	if cu <= cg {
		return "uniform disc", tu, true
	}
	return "Gaussian", 2 * tg, true
}
