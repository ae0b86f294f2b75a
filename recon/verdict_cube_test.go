package recon

import (
	"math"
	"strings"
	"testing"

	"vcz/recon/optim"
)

// TestPlaneLimitWarning checks the warning of planes stopped at their iteration limit with
// the rule of the gray verdict (a tail decrease above VerdictTail, or too few iterations to
// tell, NaN): it names the count and the planes, and the try depends on whether the limit
// was -iter's.
func TestPlaneLimitWarning(t *testing.T) {
	planes := []CubePlane{{Label: "channel 1"}, {Label: "channel 2"}, {Label: "channel 3"}}
	at := func(iter int, tail float64) runOut {
		r := runOut{Tail: tail}
		r.Status, r.Iter = optim.IterationLimit, iter
		return r
	}
	done := runOut{Converged: true, Tail: math.NaN()}
	done.Status, done.Iter = optim.FunctionConvergence, 40
	for _, c := range []struct {
		last    []runOut
		maxIter int
		want    []string // substrings; none for no warning
	}{
		{[]runOut{done, done, done}, 1000, nil},
		{[]runOut{done, at(200, 1e-4), done}, 1000, nil}, // flat at the limit
		{[]runOut{at(30, math.NaN()), done, at(30, math.NaN())}, 30, []string{"2 of 3 planes", "limit of 30", "plane 1 (channel 1), 3 (channel 3)", "raise -iter"}},
		{[]runOut{done, at(200, 0.01), done}, 1000, []string{"1 of 3 planes", "limit of 200", "plane 2 (channel 2)", "at most 200 iterations whatever -iter says"}},
	} {
		w := planeLimitWarning(c.last, planes, c.maxIter)
		if (w != "") != (c.want != nil) {
			t.Errorf("%+v: warning %q", c.want, w)
		}
		for _, s := range c.want {
			if !strings.Contains(w, s) {
				t.Errorf("warning %q lacks %q", w, s)
			}
		}
	}
}

// TestCubeIterationLimit solves a small cube (a disc and an offset point, gray, in 8
// channels as 4 planes, a given weight) with an iteration cap of 15 a run, which its planes
// cannot converge in: the cube warns that they stopped at the limit, naming them and what to
// try; with the default limits it settles and does not.
func TestCubeIterationLimit(t *testing.T) {
	vis := func(u, v float64) complex128 {
		q := math.Hypot(u, v)
		c := complex(0.3, 0) * cmplxExp(-2*math.Pi*(u*5*Mas+v*2*Mas))
		return (complex(UniformDiscV(4*Mas, q), 0) + c) / 1.3
	}
	d := observeChromatic(21, 6, 50, func(float64) func(u, v float64) complex128 { return vis },
		synthOpts{nchan: 8, nha: 8, lmin: 1.5e-6, lmax: 2.4e-6, hspan: 1.5, sigV2: 0.01, sigPhi: 0.05, t3: true, noise: true})
	planes, err := SplitChannels(d, Channels{Groups: 4})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		s    Settings
		warn bool
	}{
		{Settings{Seed: 1, PathIter: 15, MaxIter: 15}, true},
		{Settings{Seed: 1}, false},
	} {
		r, err := SolveCube(CubeProblem{Problem: Problem{Data: d, Reg: tvReg, Weight: 100, Grid: Grid{N: 32, Pixel: 0.5 * Mas}}, Planes: planes}, c.s)
		if err != nil {
			t.Fatal(err)
		}
		var got string
		for _, w := range r.Warnings {
			if strings.Contains(w, "stopped at the iteration limit") {
				got = w
			}
		}
		t.Logf("limit %d: %s; χ²ᵣ %.3g; warnings %q", c.s.MaxIter, r.StopReason, r.Chi2r, r.Warnings)
		if (got != "") != c.warn {
			t.Errorf("limit %d: warning %q, want one: %v", c.s.MaxIter, got, c.warn)
		}
		if c.warn && !strings.Contains(got, "raise -iter") {
			t.Errorf("warning %q does not say what to try", got)
		}
	}
}
