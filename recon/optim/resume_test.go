package optim

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// shiftedQuadratic returns f(x) = ½ xᵀAx − bᵀx with A = Qᵀ diag(1, 10, …, 10^(n−1)) Q for a
// random orthogonal Q (the Q of the QR factorisation of a random matrix), symmetric positive
// definite with condition number 10^(n−1), b settable through the returned slice, and A.
func shiftedQuadratic(n int, seed uint64) (func(grad, x []float64) float64, []float64, *mat.SymDense) {
	rng := rand.New(rand.NewPCG(seed, seed))
	m := mat.NewDense(n, n, nil)
	for i := range n {
		for j := range n {
			m.Set(i, j, rng.NormFloat64())
		}
	}
	var qr mat.QR
	qr.Factorize(m)
	var q mat.Dense
	qr.QTo(&q)
	a := mat.NewSymDense(n, nil)
	for i := range n {
		for j := i; j < n; j++ {
			v := 0.0
			for k := range n {
				v += q.At(k, i) * math.Pow(10, float64(k)) * q.At(k, j)
			}
			a.SetSym(i, j, v)
		}
	}
	b := make([]float64, n)
	ad := make([]float64, n*n) // A row by row, for an objective that allocates nothing
	for i := range n {
		for j := range n {
			ad[i*n+j] = a.At(i, j)
		}
	}
	fn := func(grad, x []float64) float64 {
		f := 0.0
		for i := range x {
			ax := 0.0
			for j, xj := range x {
				ax += ad[i*n+j] * xj
			}
			f += 0.5*x[i]*ax - b[i]*x[i]
			if grad != nil {
				grad[i] = ax - b[i]
			}
		}
		return f
	}
	return fn, b, a
}

// TestResume runs two minimisations of a quadratic whose linear term changes between them,
// as a block of a block-coordinate descent sees when the other blocks move, the second
// resuming from the first's curvature memory. The minimiser is checked against A⁻¹b solved
// by gonum's Cholesky factorisation (an independent reference). With no more variables than
// pairs, the kept pairs describe the whole (unchanged) Hessian, so the resumed run must need
// fewer evaluations than a fresh one; it must repeat its bits, and after Reset run exactly as
// a run without memory.
func TestResume(t *testing.T) {
	const n = 4
	fn, b, a := shiftedQuadratic(n, 3)
	var chol mat.Cholesky
	if !chol.Factorize(a) {
		t.Fatal("A is not positive definite")
	}
	exact := func() []float64 {
		var x mat.VecDense
		if err := chol.SolveVecTo(&x, mat.NewVecDense(n, b)); err != nil {
			t.Fatal(err)
		}
		return x.RawVector().Data
	}
	setB := func(shift float64) {
		for i := range b {
			b[i] = math.Sin(float64(i+1)) + shift*math.Cos(3*float64(i))
		}
	}
	set := Settings{PGTol: 1e-6, FTol: -1, MaxIter: 1000}
	x0 := make([]float64, n)
	// sequence minimises at b(0), then from there at b(0.1) resuming from st.
	sequence := func(st *State) (first, second Result) {
		setB(0)
		s := set
		s.Resume = st
		var err error
		if first, err = Minimize(Problem{Func: fn}, x0, s); err != nil {
			t.Fatal(err)
		}
		setB(0.1)
		if second, err = Minimize(Problem{Func: fn}, first.X, s); err != nil {
			t.Fatal(err)
		}
		return first, second
	}
	var st State
	first, resumed := sequence(&st)
	if st.Pairs() == 0 {
		t.Fatalf("the state holds no pairs after a run (%v, then %v)", first.Status, resumed.Status)
	}
	want := exact()
	for i, v := range resumed.X {
		if math.Abs(v-want[i]) > 2e-6 { // ‖x − A⁻¹b‖ ≤ ‖g‖₂/λ_min ≤ √n·PGTol
			t.Fatalf("resumed run: x[%d] = %.12g, A⁻¹b gives %.12g", i, v, want[i])
		}
	}
	fresh, err := Minimize(Problem{Func: fn}, first.X, set)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("second run: %d evaluations fresh, %d resumed", fresh.Evals, resumed.Evals)
	if resumed.Evals >= fresh.Evals {
		t.Errorf("the resumed run needs %d evaluations, a fresh one %d", resumed.Evals, fresh.Evals)
	}
	var st2 State
	_, again := sequence(&st2)
	for i := range again.X {
		if math.Float64bits(again.X[i]) != math.Float64bits(resumed.X[i]) {
			t.Fatalf("repeated sequence: x[%d] = %v, first time %v", i, again.X[i], resumed.X[i])
		}
	}
	st.Reset()
	if st.Pairs() != 0 {
		t.Fatalf("Reset left %d pairs", st.Pairs())
	}
	s := set
	s.Resume = &st
	reset, err := Minimize(Problem{Func: fn}, first.X, s)
	if err != nil {
		t.Fatal(err)
	}
	if reset.Evals != fresh.Evals || reset.Iter != fresh.Iter {
		t.Errorf("after Reset: %d evaluations and %d iterations, without memory %d and %d", reset.Evals, reset.Iter, fresh.Evals, fresh.Iter)
	}
	for i := range reset.X {
		if math.Float64bits(reset.X[i]) != math.Float64bits(fresh.X[i]) {
			t.Fatalf("after Reset: x[%d] = %v, without memory %v", i, reset.X[i], fresh.X[i])
		}
	}
}

// TestResumeAllocs checks that a run resuming from a State reuses its workspace: it
// allocates only its Result.
func TestResumeAllocs(t *testing.T) {
	const n = 40
	fn, b, _ := shiftedQuadratic(n, 5)
	for i := range b {
		b[i] = 1
	}
	x0 := make([]float64, n)
	set := Settings{MaxIter: 5, FTol: -1}
	fresh := testing.AllocsPerRun(20, func() {
		if _, err := Minimize(Problem{Func: fn}, x0, set); err != nil {
			t.Fatal(err)
		}
	})
	var st State
	set.Resume = &st
	resumed := testing.AllocsPerRun(20, func() {
		if _, err := Minimize(Problem{Func: fn}, x0, set); err != nil {
			t.Fatal(err)
		}
	})
	t.Logf("allocations per run: %v without a State, %v resuming", fresh, resumed)
	if resumed > 1 {
		t.Errorf("a resumed run allocates %v times (a fresh one %v), want 1, its Result", resumed, fresh)
	}
}
