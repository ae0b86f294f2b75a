package workflow

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"vcz/io/fitsimage"
	"vcz/recon"
)

// Region is a part of the image whose flux a feature test weighs: a circle, or a mask on the
// image's grid.
type Region struct {
	// Text is the region as the user gave it, for messages.
	Text string
	// X, Y (east and north of the phase centre) and R are the circle's centre and radius
	// (rad), used when Mask is nil.
	X, Y, R float64
	// Mask, when non-nil, holds the region's pixels (N², row-major as the image).
	Mask []bool
	// MaskN and MaskPixel are the grid of Mask.
	MaskN     int
	MaskPixel float64
}

// ParseRegion reads a region: "x,y,r" in mas (x east, y north of the phase centre), or the
// name of a FITS image whose non-zero, finite pixels are the region (it must have the
// image's grid, which the feature test checks).
func ParseRegion(text string) (Region, error) {
	if parts := strings.Split(text, ","); len(parts) == 3 {
		var v [3]float64
		for i, p := range parts {
			x, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				return Region{}, inputErrorf("-feature %q: want x,y,r in mas or a FITS mask file", text)
			}
			v[i] = x
		}
		if !(v[2] > 0) {
			return Region{}, inputErrorf("-feature %q: the radius must be positive", text)
		}
		return Region{Text: text, X: v[0] * recon.Mas, Y: v[1] * recon.Mas, R: v[2] * recon.Mas}, nil
	}
	im, err := fitsimage.ReadFile(text)
	if err != nil {
		return Region{}, inputError(text, fmt.Errorf("-feature: %w", err))
	}
	if im.Planes > 1 {
		return Region{}, inputErrorf("-feature %s: a mask is one image, not a cube of %d", text, im.Planes)
	}
	if im.NX != im.NY {
		return Region{}, inputErrorf("-feature %s: the mask is %d × %d pixels; images are square", text, im.NX, im.NY)
	}
	r := Region{Text: text, Mask: make([]bool, len(im.Data)), MaskN: im.NX, MaskPixel: im.Pixel}
	any := false
	for i, v := range im.Data {
		r.Mask[i] = v != 0 && !math.IsNaN(v) && !math.IsInf(v, 0)
		any = any || r.Mask[i]
	}
	if !any {
		return Region{}, inputErrorf("-feature %s: the mask has no non-zero pixel", text)
	}
	return r, nil
}

// Reference kinds of a feature test.
const (
	// RefAzimuthal is the azimuthal average about the photocentre, for a stellar disc.
	RefAzimuthal = "azimuthal average about the photocentre"
	// RefAnnulus is the mean of a surrounding annulus, for anything else.
	RefAnnulus = "mean of the surrounding annulus"
)

// Feature is the outcome of a feature test of one region over the bootstrap images.
type Feature struct {
	Region    string  `json:"region"`
	Pixels    int     `json:"pixels"`
	Reference string  `json:"reference"`
	Excess    float64 `json:"excess"`      // flux minus reference in the full data's image (fraction of the total)
	MeanExc   float64 `json:"mean_excess"` // the same, mean over the replicates
	Noise     float64 `json:"noise"`       // standard deviation of the excess over the replicates
	// Z is the test statistic MeanExc / Noise. Noise is estimated from the replicates, so Z
	// follows Student's t with Replicates − 1 degrees of freedom, not a normal distribution.
	Z float64 `json:"significance"`
	// Replicates is the number of replicate images the test rests on, and Distribution names
	// the distribution of Z under which FalseAlarm is computed.
	Replicates   int    `json:"replicates"`
	Distribution string `json:"distribution"`
	// Brighter and Fainter are the fractions of the replicates whose excess is above Noise,
	// or below −Noise; a fraction counted from K replicates resolves nothing below 1/K.
	Brighter float64 `json:"brighter_fraction"`
	Fainter  float64 `json:"fainter_fraction"`
	// FalseAlarm is the probability of |Z| at least this large for a region without a
	// feature, under Gaussian noise: the two-sided tail of Student's t with Replicates − 1
	// degrees of freedom (StudentTFalseAlarm).
	FalseAlarm float64 `json:"false_alarm"`
	// Sigma is the significance of a normal variable with the same two-sided probability
	// FalseAlarm, with the sign of Z: the number to compare with the usual 3σ and 5σ.
	Sigma float64 `json:"equivalent_sigma"`
}

// String says the outcome in one line.
func (f Feature) String() string {
	p := fmt.Sprintf("%.2g", f.FalseAlarm)
	if f.FalseAlarm == 0 {
		p = "< 1e-300" // the tail underflowed
	}
	return fmt.Sprintf("region %s (%d pixels): excess %+.4g of the total flux over the %s (t = %.3g from %d replicates; under %s, false-alarm probability %s, as for %.3gσ of a normal variable): brighter than the noise in %s, fainter in %s of the resamplings",
		f.Region, f.Pixels, f.Excess, f.Reference, f.Z, f.Replicates, f.Distribution, p, f.Sigma,
		countedFraction(f.Brighter, f.Replicates), countedFraction(f.Fainter, f.Replicates))
}

// countedFraction says a fraction counted from k replicates: as a count and a percentage,
// or, when no replicate counted, as below 1/k, the smallest fraction k replicates resolve.
func countedFraction(frac float64, k int) string {
	c := int(math.Round(frac * float64(k)))
	if c == 0 {
		return fmt.Sprintf("0 of %d (< %.3g %%)", k, 100/float64(k))
	}
	return fmt.Sprintf("%d of %d (%.0f %%)", c, k, 100*frac)
}

// StudentTFalseAlarm returns the two-sided probability P(|T| ≥ |t|) of Student's t with nu
// degrees of freedom (Student 1908, Biometrika 6, 1), the distribution of a mean divided by
// a standard deviation estimated from nu + 1 normal values:
// 2·S(|t|) = I_{ν/(ν+t²)}(ν/2, 1/2), computed as the upper tail, so without the cancellation
// of 1 − CDF for large |t|.
func StudentTFalseAlarm(t float64, nu int) float64 {
	return 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(nu)}.Survival(math.Abs(t))
}

// MinReplicates is the number of bootstrap replicates below which every figure that divides
// by a standard deviation estimated from the replicates is warned of (common practice, no
// source): the per-pixel significance map with its peak and its 3σ and 5σ contours, and the
// feature test. The standard deviation of K normal values is uncertain by about
// 1/√(2(K − 1)) of itself (the standard error of a sample standard deviation), 16 % at 20
// against 41 % at 4, and a mean divided by it follows Student's t with K − 1 degrees of
// freedom (Student 1908, Biometrika 6, 1), whose tails are far heavier than the normal
// distribution's for few degrees of freedom.
const MinReplicates = 20

// FewReplicatesWarning returns the warning of what (a phrase such as "the feature test")
// resting on a standard deviation estimated from k bootstrap replicates, or "" when k is at
// least MinReplicates. It names the degrees of freedom and the value of mean/σ at which
// Student's t reaches the two-sided probability of 3σ of a normal variable.
func FewReplicatesWarning(k int, what string) string {
	if k >= MinReplicates {
		return ""
	}
	nu := max(k-1, 1)
	return fmt.Sprintf("only %d bootstrap replicates, fewer than %d, behind %s: their standard deviation is uncertain by about %.0f %%, and mean/σ follows Student's t with %d degrees of freedom, which reaches the false-alarm probability of 3σ of a normal variable (0.27 %%) only at %.3g; run -bootstrap %d or more",
		k, MinReplicates, what, 100/math.Sqrt(2*float64(nu)), nu, StudentTLevel(3, nu), MinReplicates)
}

// StudentTLevel returns the value of |t| at which Student's t with nu degrees of freedom has
// the same two-sided probability as z standard deviations of a normal variable, erfc(z/√2):
// the inverse of StudentTFalseAlarm at that probability.
func StudentTLevel(z float64, nu int) float64 {
	p := math.Erfc(z / math.Sqrt2)
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(nu)}.Quantile(1 - p/2)
}

// regionPixels returns the pixels of region r on the n × n grid of pixel pix, its centre
// (pixel indices), its radius (pixels) and its number of pixels. Errors are *InputError: a
// mask on another grid, or a region that holds no pixel centre.
func regionPixels(r Region, n int, pix float64) (in []bool, cx, cy, rad float64, np int, err error) {
	in = make([]bool, n*n)
	if r.Mask != nil {
		if r.MaskN != n || math.Abs(r.MaskPixel-pix) > 1e-6*pix {
			return nil, 0, 0, 0, 0, inputErrorf("-feature %s: the mask is %d × %d pixels of %.4g mas; the image %d × %d of %.4g mas", r.Text, r.MaskN, r.MaskN, r.MaskPixel/recon.Mas, n, n, pix/recon.Mas)
		}
		copy(in, r.Mask)
		c := 0
		for p, ok := range in {
			if ok {
				cx += float64(p % n)
				cy += float64(p / n)
				c++
			}
		}
		cx, cy = cx/float64(c), cy/float64(c)
		rad = math.Sqrt(float64(c) / math.Pi)
	} else {
		// Pixel (ix, iy) is at x = −(ix − n/2)·pixel, y = (iy − n/2)·pixel (CONVENTIONS.md).
		cx, cy, rad = float64(n/2)-r.X/pix, float64(n/2)+r.Y/pix, r.R/pix
		for iy := 0; iy < n; iy++ {
			for ix := 0; ix < n; ix++ {
				in[iy*n+ix] = math.Hypot(float64(ix)-cx, float64(iy)-cy) <= rad
			}
		}
	}
	for _, ok := range in {
		if ok {
			np++
		}
	}
	if np == 0 {
		return nil, 0, 0, 0, 0, inputErrorf("-feature %s: the region holds no pixel centre of the %d × %d image (pixel %.4g mas)", r.Text, n, n, pix/recon.Mas)
	}
	return in, cx, cy, rad, np, nil
}

// CheckRegions checks the regions of -feature against the grid the image of im will have
// (the one its problem gives, or ChooseGrid's, as recon.Solve picks it), before the
// reconstruction and the bootstrap spend their time: a mask on another grid, or a region
// that holds no pixel centre, is an *InputError naming the command image.
func (im *Image) CheckRegions(regions []Region) error {
	if len(regions) == 0 {
		return nil
	}
	g := im.Problem.Grid
	switch {
	case im.Problem.Choice != nil:
		g = im.Problem.Choice.Grid
	case g.N == 0:
		ch, err := recon.ChooseGrid(im.Data, im.Problem.GridOptions)
		if err != nil {
			return nil // the reconstruction says why
		}
		g = ch.Grid
	}
	for _, r := range regions {
		if _, _, _, _, _, err := regionPixels(r, g.N, g.Pixel); err != nil {
			return inputErrorf("image: %v", err)
		}
	}
	return nil
}

// FeatureTest weighs region r in the full data's image and in every replicate of b: its flux
// against a smooth reference, the azimuthal average about the image's photocentre (in rings
// one pixel wide, the region's own pixels left out) when disc is true, otherwise the mean
// of the annulus from the region's radius to twice it about its centre (for a mask, the
// radius of the circle of the mask's area about its centroid), times the region's pixels.
// The noise is the standard deviation of that excess over the replicates, and the region
// is brighter (fainter) in a replicate whose excess exceeds the noise (falls below minus the
// noise). The significance is the mean excess over the replicates divided by the noise, and
// since the noise is estimated from the K replicates, its false-alarm probability is that of
// Student's t with K − 1 degrees of freedom. Errors are *InputError (a mask on another grid,
// a region off the image or too small for a pixel), or fewer than two replicates.
func FeatureTest(b *Bootstrap, full []float64, r Region, disc bool) (Feature, error) {
	n := b.N
	in, cx, cy, rad, np, err := regionPixels(r, n, b.Pixel)
	if err != nil {
		return Feature{}, err
	}
	f := Feature{Region: r.Text, Pixels: np, Reference: RefAnnulus}
	if disc {
		f.Reference = RefAzimuthal
	}
	excess := func(img []float64) float64 {
		flux := 0.0
		for p, ok := range in {
			if ok {
				flux += img[p]
			}
		}
		if disc {
			return flux - azimuthalRef(img, n, in)
		}
		s, c := 0.0, 0
		for iy := 0; iy < n; iy++ {
			for ix := 0; ix < n; ix++ {
				d := math.Hypot(float64(ix)-cx, float64(iy)-cy)
				if p := iy*n + ix; !in[p] && d > rad && d <= 2*rad {
					s += img[p]
					c++
				}
			}
		}
		if c == 0 {
			return math.NaN()
		}
		return flux - s/float64(c)*float64(np)
	}
	f.Excess = excess(full)
	if math.IsNaN(f.Excess) {
		return Feature{}, inputErrorf("-feature %s: no pixel of the annulus around the region lies on the image", r.Text)
	}
	var ex []float64
	for _, img := range b.Images {
		if img != nil {
			ex = append(ex, excess(img))
		}
	}
	if len(ex) < 2 {
		return Feature{}, fmt.Errorf("-feature %s: %d replicate images: the noise needs at least 2", r.Text, len(ex))
	}
	k := float64(len(ex))
	for _, e := range ex {
		f.MeanExc += e
	}
	f.MeanExc /= k
	for _, e := range ex {
		f.Noise += (e - f.MeanExc) * (e - f.MeanExc)
	}
	f.Noise = math.Sqrt(f.Noise / (k - 1))
	for _, e := range ex {
		if e > f.Noise {
			f.Brighter++
		}
		if e < -f.Noise {
			f.Fainter++
		}
	}
	f.Brighter /= k
	f.Fainter /= k
	if f.Noise > 0 {
		f.Z = f.MeanExc / f.Noise
	}
	nu := len(ex) - 1
	f.Replicates = len(ex)
	f.Distribution = fmt.Sprintf("Student's t with %d degrees of freedom", nu)
	f.FalseAlarm = StudentTFalseAlarm(f.Z, nu)
	// The normal deviate of the same two-sided probability; a probability below 1e-300
	// (37σ) is held there, so that the deviate stays finite.
	f.Sigma = math.Copysign(-distuv.UnitNormal.Quantile(max(f.FalseAlarm, 1e-300)/2), f.Z)
	return f, nil
}

// azimuthalRef returns the flux the region in would hold if img were its azimuthal average
// about its photocentre: each pixel of the region gets the mean of the pixels outside the
// region in its ring (rings one pixel wide); a ring with no such pixel gives the pixel's
// own value.
func azimuthalRef(img []float64, n int, in []bool) float64 {
	var sx, sy, s float64
	for p, v := range img {
		sx += v * float64(p%n)
		sy += v * float64(p/n)
		s += v
	}
	if !(s > 0) {
		return 0
	}
	cx, cy := sx/s, sy/s
	ring := func(p int) int { return int(math.Hypot(float64(p%n)-cx, float64(p/n)-cy)) }
	nr := int(math.Sqrt2*float64(n)) + 2
	sum, cnt := make([]float64, nr), make([]int, nr)
	for p, v := range img {
		if !in[p] {
			k := ring(p)
			sum[k] += v
			cnt[k]++
		}
	}
	ref := 0.0
	for p, ok := range in {
		if !ok {
			continue
		}
		if k := ring(p); cnt[k] > 0 {
			ref += sum[k] / float64(cnt[k])
		} else {
			ref += img[p]
		}
	}
	return ref
}

// DiscReference reports whether a region centred at (x, y) (rad) lies on the stellar disc
// of the grid choice: the V² data were best fitted by a uniform disc and the centre lies
// within its radius. The feature test then takes the azimuthal average as reference.
func DiscReference(g recon.GridChoice, r Region) bool {
	if g.SizeModel != "uniform disc" || !(g.Size > 0) {
		return false
	}
	x, y := r.X, r.Y
	if r.Mask != nil {
		var sx, sy float64
		c := 0
		for p, ok := range r.Mask {
			if ok {
				sx += -float64(p%r.MaskN-r.MaskN/2) * r.MaskPixel
				sy += float64(p/r.MaskN-r.MaskN/2) * r.MaskPixel
				c++
			}
		}
		x, y = sx/float64(c), sy/float64(c)
	}
	return math.Hypot(x, y) < g.Size/2
}
