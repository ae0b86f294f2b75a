package batch

import (
	"errors"
	"fmt"
	"math"
	"sync"

	"vcz/dataset"
	"vcz/recon"
	"vcz/recon/optim"
)

// JointEpoch is the part of one epoch in a joint reconstruction.
type JointEpoch struct {
	Obj *recon.Objective  // data terms on the common grid
	Reg recon.Regularizer // spatial regularizer; nil for none
	Mu  float64           // weight of Reg
	Rho float64           // weight of the flux term ρ(Σx − 1)²; 0 leaves the flux free
	// Upper, when non-nil, bounds each pixel from above (0 outside a support); the lower
	// bound is 0 everywhere.
	Upper []float64

	rgrad []float64
}

// NewJointEpoch builds the epoch's data terms for data d on grid g with the flux-normalised
// model, and the flux weight ρ as recon.Solve sets it: the number of fitted data.
func NewJointEpoch(d *dataset.Data, g recon.Grid, terms recon.TermOptions, reg recon.Regularizer, mu float64, workers int) (*JointEpoch, error) {
	m, err := recon.NewForwardModel(d, g, true, recon.NewTransform(workers))
	if err != nil {
		return nil, err
	}
	o := recon.NewObjective(d, m, terms)
	if o.Use() == 0 {
		return nil, errors.New("no data of the selected types to fit")
	}
	return &JointEpoch{Obj: o, Reg: reg, Mu: mu, Rho: float64(max(d.Len(o.Use()), 1))}, nil
}

// Joint is the joint objective of package doc over T epochs on one grid of NPix pixels.
// Its variable is the concatenation of the epochs' images, epoch after epoch.
type Joint struct {
	Epochs []*JointEpoch
	NPix   int
	Lambda float64 // temporal weight λ
	// Parallel evaluates the epochs' terms concurrently (each epoch owns its buffers); the
	// sum is formed in epoch order either way, so the value does not depend on it.
	Parallel bool

	vals []float64
}

// Eval returns F at x (len T·NPix) and, when grad is non-nil, overwrites grad with ∇F.
func (j *Joint) Eval(grad, x []float64) float64 {
	T, n := len(j.Epochs), j.NPix
	if len(x) != T*n || (grad != nil && len(grad) != T*n) {
		panic(fmt.Sprintf("batch: Joint.Eval: want %d values, have %d (grad %d)", T*n, len(x), len(grad)))
	}
	if len(j.vals) != T {
		j.vals = make([]float64, T)
	}
	one := func(t int) {
		e := j.Epochs[t]
		xt := x[t*n : (t+1)*n]
		var gt []float64
		if grad != nil {
			gt = grad[t*n : (t+1)*n]
		}
		j.vals[t] = e.eval(gt, xt)
	}
	if j.Parallel && T > 1 {
		var wg sync.WaitGroup
		for t := range T {
			wg.Add(1)
			go func() { defer wg.Done(); one(t) }()
		}
		wg.Wait()
	} else {
		for t := range T {
			one(t)
		}
	}
	v := 0.0
	for _, vt := range j.vals {
		v += vt
	}
	if j.Lambda != 0 {
		v += j.Lambda * j.temporal(grad, x)
	}
	return v
}

// temporal returns Σ_{t>1} ‖x_t − x_{t−1}‖² and adds λ times its gradient to grad.
func (j *Joint) temporal(grad, x []float64) float64 {
	T, n := len(j.Epochs), j.NPix
	s := 0.0
	for t := 1; t < T; t++ {
		a, b := x[(t-1)*n:t*n], x[t*n:(t+1)*n]
		for i := range n {
			d := b[i] - a[i]
			s += d * d
			if grad != nil {
				g := 2 * j.Lambda * d
				grad[t*n+i] += g
				grad[(t-1)*n+i] -= g
			}
		}
	}
	return s
}

// Temporal returns Σ_{t>1} ‖x_t − x_{t−1}‖² of the concatenated images x.
func (j *Joint) Temporal(x []float64) float64 {
	save := j.Lambda
	defer func() { j.Lambda = save }()
	j.Lambda = 0
	return j.temporal(nil, x)
}

// eval is J + μR + ρ(Σx − 1)² of one epoch.
func (e *JointEpoch) eval(grad, x []float64) float64 {
	fl := 0.0
	for _, xi := range x {
		fl += xi
	}
	if !(fl > 0) {
		// As in recon.Solve: no normalised image exists, so return a huge finite value
		// and a gradient towards more flux.
		for i := range grad {
			grad[i] = -2 * max(e.Rho, 1)
		}
		return 1e300
	}
	v := e.Obj.Eval(grad, x)
	if e.Reg != nil && e.Mu != 0 {
		var rg []float64
		if grad != nil {
			if len(e.rgrad) != len(x) {
				e.rgrad = make([]float64, len(x))
			}
			rg = e.rgrad
		}
		v += e.Mu * e.Reg.Eval(rg, x)
		for i := range grad {
			grad[i] += e.Mu * rg[i]
		}
	}
	if e.Rho > 0 {
		d := fl - 1
		v += e.Rho * d * d
		for i := range grad {
			grad[i] += 2 * e.Rho * d
		}
	}
	return v
}

// JointSettings control SolveJoint. The zero value gives the defaults.
type JointSettings struct {
	// MaxIter is the iteration limit of each run; 0 means recon.DefaultMaxIter.
	MaxIter int
	// FTol stops a run when the objective decreased by less than FTol·max(|F|, 1) per
	// iteration on average over 5 iterations (the test recon.Solve uses); 0 means 1e-7.
	FTol float64
	// Steps is the number of temporal weights tried by the automatic choice; 0 means 6.
	Steps int
	// Tolerance is the rise of each epoch's χ²ᵣ over that of its start image that the
	// automatic choice accepts, as a fraction; 0 means 0.05.
	Tolerance float64
	// Progress, when non-nil, is called after every iteration with the temporal weight of
	// the run, the iteration and the objective; false stops SolveJoint with an error.
	Progress func(lambda float64, iter int, f float64) bool
}

// LambdaStep is one run of the automatic choice of the temporal weight.
type LambdaStep struct {
	Lambda   float64
	Chi2r    float64 // total χ²ᵣ of all epochs
	Temporal float64 // Σ‖x_t − x_{t−1}‖²
	Accepted bool
}

// JointResult is the outcome of SolveJoint.
type JointResult struct {
	Images   [][]float64 // per epoch, normalised to flux 1
	Lambda   float64
	Chi2r    []float64 // total χ²ᵣ per epoch
	Chi2rAll float64
	Iter     int // of the kept run
	TotalIt  int
	Path     []LambdaStep // the automatic choice; empty for a given weight
	Status   string
}

// SolveJoint minimises the joint objective from the start images x0 (one per epoch,
// usually the epochs' independent reconstructions). With lambda > 0 it runs once at that
// weight. With lambda = 0 the weight is chosen: starting from λ₀ = ρ̄·NPix/10⁴ (ρ̄ the mean
// number of data of an epoch, NPix scaling the squared difference of two unit-flux
// images), it tries λ₀·10^k for k = 0, 1, ..., each run warm-started from the last kept
// one, and keeps the largest weight at which no epoch's χ²ᵣ rises by more than Tolerance
// over its start image's (the discrepancy idea of recon's weight choice applied to the temporal term;
// common practice, no source). When no weight passes, the smallest is kept.
func SolveJoint(j *Joint, x0 [][]float64, lambda float64, s JointSettings) (*JointResult, error) {
	T, n := len(j.Epochs), j.NPix
	if len(x0) != T {
		panic("batch: SolveJoint: one start image per epoch is needed")
	}
	if T < 2 {
		return nil, errors.New("joint imaging needs at least two epochs")
	}
	x := make([]float64, T*n)
	upper := []float64(nil)
	for t, xt := range x0 {
		if len(xt) != n {
			panic("batch: SolveJoint: start image of the wrong size")
		}
		copy(x[t*n:], xt)
		if u := j.Epochs[t].Upper; u != nil {
			if upper == nil {
				upper = make([]float64, T*n)
				for i := range upper {
					upper[i] = math.Inf(1)
				}
			}
			copy(upper[t*n:], u)
		}
	}
	lower := make([]float64, T*n)
	for i := range x {
		x[i] = max(x[i], 0)
		if upper != nil {
			x[i] = min(x[i], upper[i])
		}
	}
	if s.MaxIter <= 0 {
		s.MaxIter = recon.DefaultMaxIter
	}
	if s.FTol <= 0 {
		s.FTol = recon.DefaultFTol
	}
	if s.Steps <= 0 {
		s.Steps = 6
	}
	if s.Tolerance <= 0 {
		s.Tolerance = 0.05
	}
	res := &JointResult{}
	run := func(x0 []float64, lam float64) (optim.Result, error) {
		j.Lambda = lam
		const window = 5
		hist := []float64{math.NaN()}
		stopped := false
		st := optim.Settings{MaxIter: s.MaxIter, FTol: -1, Callback: func(it optim.Iter) bool {
			if s.Progress != nil && !s.Progress(lam, it.Iter, it.F) {
				stopped = true
				return false
			}
			hist = append(hist, it.F)
			if k := len(hist) - 1; k > window && hist[k-window]-it.F <= s.FTol*window*math.Max(math.Abs(it.F), 1) {
				return false
			}
			return true
		}}
		r, err := optim.Minimize(optim.Problem{Func: j.Eval, Lower: lower, Upper: upper}, x0, st)
		res.TotalIt += r.Iter
		if err == nil && stopped {
			err = errors.New("stopped")
		}
		if err != nil {
			return r, fmt.Errorf("joint reconstruction (temporal weight %g): %w", lam, err)
		}
		return r, nil
	}
	measure := func(x []float64) (all float64, per []float64) {
		save := j.Lambda
		j.Lambda = 0
		j.Eval(nil, x)
		j.Lambda = save
		var c2, nn float64
		per = make([]float64, T)
		for t, e := range j.Epochs {
			per[t] = e.Obj.TotalChi2r()
			nt := 0
			for _, ty := range dataset.DataTypes() {
				if e.Obj.Use()&ty != 0 {
					nt += e.Obj.N(ty)
				}
			}
			c2 += per[t] * float64(nt)
			nn += float64(nt)
		}
		return c2 / math.Max(nn, 1), per
	}
	var best optim.Result
	if lambda > 0 {
		r, err := run(x, lambda)
		if err != nil {
			return nil, err
		}
		best, res.Lambda = r, lambda
	} else {
		_, base := measure(x)
		rho := 0.0
		for _, e := range j.Epochs {
			rho += max(e.Rho, 1)
		}
		lam := rho / float64(T) * float64(n) / 1e4
		cur := x
		for k := range s.Steps {
			r, err := run(cur, lam)
			if err != nil {
				return nil, err
			}
			c, per := measure(r.X)
			ok := true
			for t := range per {
				ok = ok && per[t] <= base[t]*(1+s.Tolerance)
			}
			res.Path = append(res.Path, LambdaStep{Lambda: lam, Chi2r: c, Temporal: j.Temporal(r.X), Accepted: ok})
			if ok || k == 0 {
				best, res.Lambda, cur = r, lam, r.X
			}
			if !ok {
				break
			}
			lam *= 10
		}
	}
	res.Iter, res.Status = best.Iter, best.Status.String()
	res.Chi2rAll, res.Chi2r = measure(best.X)
	res.Images = make([][]float64, T)
	for t := range T {
		img := append([]float64(nil), best.X[t*n:(t+1)*n]...)
		fl := 0.0
		for _, v := range img {
			fl += v
		}
		if fl > 0 {
			for i := range img {
				img[i] /= fl
			}
		}
		res.Images[t] = img
	}
	return res, nil
}
