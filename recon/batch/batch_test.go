package batch

import (
	"fmt"
	"math"
	"reflect"
	"strings"
	"testing"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/recon"
	"vcz/recon/model"
	"vcz/recon/simulate"
	"vcz/regularizers"
)

func TestClusters(t *testing.T) {
	for _, c := range []struct {
		mjd  []float64
		gap  float64
		want []Range
	}{
		{nil, 0.5, nil},
		{[]float64{3, 1, 1.2, math.NaN(), 3.1}, 0.5, []Range{{1, 1.2}, {3, 3.1}}},
		{[]float64{1, 1.5, 2, 2.5}, 0.5, []Range{{1, 2.5}}}, // gaps of exactly 0.5 do not split
		{[]float64{1, 1.5, 2}, 0.4, []Range{{1, 1}, {1.5, 1.5}, {2, 2}}},
	} {
		if got := Clusters(c.mjd, c.gap); !reflect.DeepEqual(got, c.want) {
			t.Errorf("Clusters(%v, %g) = %v, want %v", c.mjd, c.gap, got, c.want)
		}
	}
}

// Every shard K/N of a list takes each item exactly once over K = 1..N.
func TestShardCover(t *testing.T) {
	for n := 1; n <= 5; n++ {
		for items := 0; items <= 11; items++ {
			count := make([]int, items)
			for k := 1; k <= n; k++ {
				sh, err := ParseShard(fmt.Sprintf("%d/%d", k, n))
				if err != nil {
					t.Fatal(err)
				}
				for i := range items {
					if sh.Take(i) {
						count[i]++
					}
				}
			}
			for i, c := range count {
				if c != 1 {
					t.Fatalf("N=%d: item %d taken %d times", n, i, c)
				}
			}
		}
	}
	for _, bad := range []string{"", "0/2", "3/2", "1/0", "a/b", "2"} {
		if _, err := ParseShard(bad); err == nil {
			t.Errorf("ParseShard(%q) gave no error", bad)
		}
	}
}

// The SLURM job-array variables as the workload manager's sbatch manual describes them
// (SLURM_ARRAY_TASK_ID, _COUNT, _MIN, _MAX; from memory).
func TestShardFromEnv(t *testing.T) {
	for _, c := range []struct {
		env  map[string]string
		want Shard
		ok   bool
		err  bool
	}{
		{map[string]string{}, Shard{}, false, false},
		{map[string]string{"SLURM_ARRAY_TASK_ID": "0", "SLURM_ARRAY_TASK_COUNT": "4", "SLURM_ARRAY_TASK_MIN": "0"}, Shard{1, 4}, true, false},
		{map[string]string{"SLURM_ARRAY_TASK_ID": "3", "SLURM_ARRAY_TASK_COUNT": "3", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "3"}, Shard{3, 3}, true, false},
		{map[string]string{"SLURM_ARRAY_TASK_ID": "7", "SLURM_ARRAY_TASK_MIN": "5", "SLURM_ARRAY_TASK_MAX": "8"}, Shard{3, 4}, true, false},
		{map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_COUNT": "2"}, Shard{}, false, true},
		{map[string]string{"SLURM_ARRAY_TASK_ID": "2"}, Shard{}, false, true},
		{map[string]string{"SLURM_ARRAY_TASK_ID": "x", "SLURM_ARRAY_TASK_COUNT": "2"}, Shard{}, false, true},
		// A stepped array, --array=0-10:5 (sbatch manual): tasks 0, 5 and 10.
		{map[string]string{"SLURM_ARRAY_TASK_ID": "5", "SLURM_ARRAY_TASK_STEP": "5", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "10", "SLURM_ARRAY_TASK_COUNT": "3"}, Shard{2, 3}, true, false},
		{map[string]string{"SLURM_ARRAY_TASK_ID": "10", "SLURM_ARRAY_TASK_STEP": "5", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "10"}, Shard{3, 3}, true, false},
		{map[string]string{"SLURM_ARRAY_TASK_ID": "3", "SLURM_ARRAY_TASK_STEP": "5", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "10"}, Shard{}, false, true},
		{map[string]string{"SLURM_ARRAY_TASK_ID": "4", "SLURM_ARRAY_TASK_STEP": "2", "SLURM_ARRAY_TASK_COUNT": "3"}, Shard{3, 3}, true, false},
	} {
		sh, ok, err := ShardFromEnv(func(k string) string { return c.env[k] })
		if sh != c.want || ok != c.ok || (err != nil) != c.err {
			t.Errorf("%v: got %v %v %v", c.env, sh, ok, err)
		}
	}
}

func TestCollect(t *testing.T) {
	a := &Summary{Shard: "1/2", Epochs: 3, Rows: []Row{{Index: 0, Epoch: "a"}, {Index: 2, Epoch: "c"}}}
	b := &Summary{Shard: "2/2", Epochs: 3, Rows: []Row{{Index: 1, Epoch: "b"}}}
	s, err := Collect([]*Summary{b, a})
	if err != nil || len(s.Rows) != 3 || s.Rows[1].Epoch != "b" || s.Shard != "1/1" {
		t.Fatalf("%+v %v", s, err)
	}
	if _, err := Collect([]*Summary{a, a, b}); err == nil {
		t.Fatal("an epoch in two shards was accepted")
	}
	// The missing epochs are counted from 1, as the epochs' names and the shards' K are,
	// and the shards that hold them are named.
	if _, err := Collect([]*Summary{a}); err == nil || !strings.Contains(err.Error(), "number 2 (counting from 1)") ||
		!strings.Contains(err.Error(), "run shard 2/2 first") {
		t.Fatalf("missing epoch: %v", err)
	}
	// Shards 1/4 and 3/4 of six epochs ran: epochs 2, 4 and 6 are missing, from shards 2/4
	// and 4/4 (epoch i, from 1, is in shard ((i−1) mod N) + 1).
	s1 := &Summary{Shard: "1/4", Epochs: 6, Rows: []Row{{Index: 0, Epoch: "e1"}, {Index: 4, Epoch: "e5"}}}
	s3 := &Summary{Shard: "3/4", Epochs: 6, Rows: []Row{{Index: 2, Epoch: "e3"}}}
	if _, err := Collect([]*Summary{s3, s1}); err == nil ||
		!strings.Contains(err.Error(), "3 of 6 epochs are in no summary: number 2, 4, 6 (counting from 1); run shards 2/4, 4/4 first") {
		t.Fatalf("missing epochs: %v", err)
	}
}

// simEpochs simulates nights of a target whose point component moves by dx mas per
// epoch, with the demo array at the given hour angles and the first channels.
func simEpochs(t testing.TB, n int, dx float64, hours []float64, channels int) []*dataset.Data {
	return simModel(t, n, "gauss:fwhm=1.5,flux=0.6;point:x=%g,y=0.4,flux=0.4", 0.6, dx, hours, channels)
}

// simModel is simEpochs for a compact model spec with a %g for the moving x (mas).
func simModel(t testing.TB, n int, spec string, x0, dx float64, hours []float64, channels int) []*dataset.Data {
	t.Helper()
	out := make([]*dataset.Data, n)
	for k := range n {
		p, _ := simulate.Demo()
		p.MJD = 61203 + float64(k)
		p.Seed += uint64(k)
		p.HourAngles = hours
		p.Wavelengths, p.Bandwidths = p.Wavelengths[:channels], p.Bandwidths[:channels]
		m, err := model.ParseCompact(fmt.Sprintf(spec, x0+dx*float64(k)))
		if err != nil {
			t.Fatal(err)
		}
		f, _, err := simulate.Run(p, simulate.ModelSky{Model: m})
		if err != nil {
			t.Fatal(err)
		}
		d, err := dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
		if err != nil {
			t.Fatal(err)
		}
		out[k] = d
	}
	return out
}

// The joint reconstruction gives the same bits for one worker and for three (the planes
// run in a fixed order and each transform reduces in a fixed order).
func TestJointWorkers(t *testing.T) {
	data := simEpochs(t, 3, 0.3, []float64{-1, 1}, 1)
	g := recon.Grid{N: 16, Pixel: 0.3 * recon.Mas}
	ind, _ := independent(t, data, g, 1e-3, 20)
	a := joint(t, data, ind, g, 1e-3, 0, 20, 2, 1)
	b := joint(t, data, ind, g, 1e-3, 0, 20, 2, 3)
	if !reflect.DeepEqual(images(a), images(b)) || a.SpectralWeight != b.SpectralWeight {
		t.Fatalf("1 worker: λ %g, 3 workers: λ %g, or the images differ", a.SpectralWeight, b.SpectralWeight)
	}
}

// independent reconstructs every epoch alone on grid g with total variation at weight mu.
func independent(t testing.TB, data []*dataset.Data, g recon.Grid, mu float64, iter int) ([][]float64, []float64) {
	imgs := make([][]float64, len(data))
	for k, d := range data {
		p := recon.Problem{Data: d, Grid: g, Weight: mu,
			Reg: func(g recon.Grid) (recon.Regularizer, error) { return &regularizers.TV{NX: g.N, NY: g.N}, nil }}
		res, err := recon.Solve(p, recon.Settings{MaxIter: iter, Starts: 1, Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		imgs[k] = res.Image
	}
	return imgs, nil
}

// joint reconstructs the epochs together from their independent images ind on grid g with
// total variation at weight mu for each epoch, at temporal weight lambda (0: chosen over
// steps weights), with the workers given.
func joint(t testing.TB, data []*dataset.Data, ind [][]float64, g recon.Grid, mu, lambda float64, iter, steps, workers int) *recon.CubeResult {
	var eps []JointEpoch
	for k, d := range data {
		eps = append(eps, JointEpoch{Data: d, Start: ind[k], Weight: mu, MJDMin: float64(k), MJDMax: float64(k) + 0.2})
	}
	p := recon.Problem{Grid: g, Reg: func(g recon.Grid) (recon.Regularizer, error) { return &regularizers.TV{NX: g.N, NY: g.N}, nil }}
	cp, err := JointProblem(p, eps, lambda)
	if err != nil {
		t.Fatal(err)
	}
	cp.SpectralSteps = min(cp.SpectralSteps, steps)
	res, err := recon.SolveCube(cp, recon.Settings{MaxIter: iter, Workers: workers})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// images returns the planes' images of a cube.
func images(r *recon.CubeResult) [][]float64 {
	var out [][]float64
	for _, p := range r.Planes {
		out = append(out, p.Image)
	}
	return out
}

// temporal returns Σ_{t>1} ‖x_t − x_{t−1}‖².
func temporal(imgs [][]float64) float64 {
	s := 0.0
	for k := 1; k < len(imgs); k++ {
		for i, v := range imgs[k] {
			d := v - imgs[k-1][i]
			s += d * d
		}
	}
	return s
}

// On noisy epochs of an unchanging target the joint reconstruction's epoch-to-epoch
// differences are smaller than those of independent reconstructions: the temporal term
// penalises exactly Σ‖x_t − x_{t−1}‖², and the automatic weight is the largest that
// keeps χ²ᵣ within 10% (a direct consequence of the objective; common practice, no
// source for the figure).
func TestJointSteadyTarget(t *testing.T) {
	data := simEpochs(t, 3, 0, []float64{-2, -0.5, 1, 2.5}, 2)
	g := recon.Grid{N: 32, Pixel: 0.2 * recon.Mas}
	const mu = 1e-3
	ind, _ := independent(t, data, g, mu, 60)
	res := joint(t, data, ind, g, mu, 0, 60, 4, 1)
	dInd, dJoint := temporal(ind), temporal(images(res))
	t.Logf("Σ‖Δx‖²: independent %.4g, joint %.4g (λ %.3g, path %+v)", dInd, dJoint, res.SpectralWeight, res.Path)
	if !(dJoint < 0.5*dInd) {
		t.Fatalf("joint differences %g not below half the independent ones %g", dJoint, dInd)
	}
}

// A spot moving by 0.4 mas per night is recovered at each epoch by the joint
// reconstruction within one resolution element λmin/(2·Bmax) (CONVENTIONS.md): the
// brightest pixel lies within it of the true position.
func TestJointMovingSpot(t *testing.T) {
	const dx = 0.4
	data := simModel(t, 3, "gauss:fwhm=0.3,flux=0.7;point:x=%g,y=0.4,flux=0.3", 1.5, dx, []float64{-3, -2, -1, 0, 1, 2, 3}, 3)
	g := recon.Grid{N: 32, Pixel: 0.2 * recon.Mas}
	const mu = 1e-3
	ind, _ := independent(t, data, g, mu, 150)
	res := joint(t, data, ind, g, mu, 0, 150, 4, 1)
	t.Logf("λ %.3g χ²ᵣ %.4g path %+v", res.SpectralWeight, res.Chi2r, res.Path)
	resol := data[0].Summarize().Resolution / recon.Mas
	for k, img := range ind {
		px, py, sx, sy := peaks(img, g.N, 0.2, 2*resol)
		t.Logf("independent %d: star (%.2f, %.2f), spot (%.2f, %.2f)", k, px, py, sx, sy)
	}
	for k, img := range images(res) {
		px, py, sx, sy := peaks(img, g.N, 0.2, 2*resol)
		tx, ty := 1.5+dx*float64(k), 0.4
		d := math.Hypot(sx-px-tx, sy-py-ty)
		t.Logf("joint %d: star (%.2f, %.2f), spot (%.2f, %.2f), %.2f mas off", k, px, py, sx, sy, d)
		if d > resol {
			t.Errorf("epoch %d: spot at (%.2f, %.2f) mas from the star, true (%.2f, %.2f): %.2f mas off, resolution %.2f mas", k, sx-px, sy-py, tx, ty, d, resol)
		}
	}
}

// peaks returns the sky positions (mas) of the brightest pixel and of the brightest pixel
// farther than sep mas from it.
func peaks(img []float64, n int, pix, sep float64) (px, py, sx, sy float64) {
	pos := func(i int) (float64, float64) {
		return -float64(i%n-n/2) * pix, float64(i/n-n/2) * pix
	}
	best := 0
	for i, v := range img {
		if v > img[best] {
			best = i
		}
	}
	px, py = pos(best)
	second := -1
	for i, v := range img {
		x, y := pos(i)
		if math.Hypot(x-px, y-py) > sep && (second < 0 || v > img[second]) {
			second = i
		}
	}
	sx, sy = pos(second)
	// The star is the peak with more flux around it (within sep/2): a smeared point can
	// have the lower peak pixel.
	near := func(cx, cy float64) float64 {
		f := 0.0
		for i, v := range img {
			if x, y := pos(i); math.Hypot(x-cx, y-cy) <= sep/2 {
				f += v
			}
		}
		return f
	}
	if near(sx, sy) > near(px, py) {
		px, py, sx, sy = sx, sy, px, py
	}
	return
}

// TestJointWeightEdge: the automatic temporal weight gets the edge rule of the spatial
// weight of a single image (recon.Result.Warnings): on a steady target every weight of a
// short path keeps each epoch's χ²ᵣ within JointTolerance, so the kept λ is the last and
// largest tried, and JointWarnings says it is at the upper edge; when no weight passes the
// first and smallest is kept, at the lower edge; a path stopped inside its range or a given
// λ gives no such warning. A weight at the edge of its search says nothing of the weight
// the rule asks for (common practice, no source).
func TestJointWeightEdge(t *testing.T) {
	data := simEpochs(t, 3, 0, []float64{-1, 1}, 1)
	g := recon.Grid{N: 16, Pixel: 0.3 * recon.Mas}
	const mu = 1e-3
	ind, _ := independent(t, data, g, mu, 20)
	solve := func(steps, iter int, weight float64) *recon.CubeResult {
		var eps []JointEpoch
		for k, d := range data {
			eps = append(eps, JointEpoch{Data: d, Start: ind[k], Weight: weight, MJDMin: float64(k), MJDMax: float64(k) + 0.2})
		}
		p := recon.Problem{Grid: g, Reg: func(g recon.Grid) (recon.Regularizer, error) { return &regularizers.TV{NX: g.N, NY: g.N}, nil }}
		cp, err := JointProblem(p, eps, 0)
		if err != nil {
			t.Fatal(err)
		}
		cp.SpectralSteps = steps
		res, err := recon.SolveCube(cp, recon.Settings{MaxIter: iter, Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	edgeWarnings := func(w []string) []string {
		var out []string
		for _, s := range w {
			if strings.Contains(s, "temporal weight") && strings.Contains(s, "edge of the searched range") {
				out = append(out, s)
			}
		}
		return out
	}

	up := solve(2, 20, mu)
	t.Logf("path %+v, edge %q", up.Path, up.SpectralEdge)
	if len(up.Path) != 2 || !up.Path[0].Accepted || !up.Path[1].Accepted || up.SpectralWeight != up.Path[1].Weight {
		t.Fatalf("steady target: path %+v, want both weights accepted and the second kept, λ %g", up.Path, up.SpectralWeight)
	}
	w := JointWarnings(up)
	if e := edgeWarnings(w); up.SpectralEdge != "upper" || len(e) != 1 || !strings.Contains(e[0], "upper edge") ||
		!strings.Contains(e[0], fmt.Sprintf("%.3g", up.Path[1].Weight)) {
		t.Fatalf("every weight kept, λ %g the largest tried: edge %q, warnings %q", up.SpectralWeight, up.SpectralEdge, w)
	}
	if len(w) != len(up.Warnings)+1 {
		t.Errorf("JointWarnings %q dropped the cube's warnings %q", w, up.Warnings)
	}

	// Epochs started from images made at a spatial weight 10⁹ times smaller than the
	// joint run's: the stronger regularizer alone raises every epoch's χ²ᵣ far beyond the
	// tolerance at the first weight already.
	low := solve(2, 20, 1e9*mu)
	t.Logf("path %+v, edge %q", low.Path, low.SpectralEdge)
	if len(low.Path) != 1 || low.Path[0].Accepted {
		t.Fatalf("spatial weight %g: path %+v, want the first weight rejected", 1e9*mu, low.Path)
	}
	if e := edgeWarnings(JointWarnings(low)); low.SpectralEdge != "lower" || len(e) != 1 || !strings.Contains(e[0], "lower edge") {
		t.Fatalf("no weight accepted: edge %q, warnings %q", low.SpectralEdge, JointWarnings(low))
	}

	// A spot moving by 1 mas a night: the path stops at a rejected weight after a kept one,
	// inside its range, and nothing is said.
	data = simModel(t, 3, "gauss:fwhm=1.5,flux=0.6;point:x=%g,y=0.4,flux=0.4", -1, 1, []float64{-1, 1}, 1)
	ind, _ = independent(t, data, g, mu, 100)
	in := solve(JointSteps, 20, mu)
	t.Logf("path %+v, edge %q", in.Path, in.SpectralEdge)
	if n := len(in.Path); n < 2 || n == JointSteps || !in.Path[0].Accepted || in.Path[n-1].Accepted {
		t.Fatalf("moving spot: path %+v, want a rejected weight after a kept one", in.Path)
	}
	if in.SpectralEdge != "" || len(edgeWarnings(JointWarnings(in))) != 0 {
		t.Fatalf("weight inside the range: edge %q, warnings %q", in.SpectralEdge, JointWarnings(in))
	}

	// A given λ has no search, hence no edge.
	if fixed := joint(t, data, ind, g, mu, up.SpectralWeight, 20, 2, 1); fixed.SpectralEdge != "" || len(edgeWarnings(JointWarnings(fixed))) != 0 {
		t.Fatalf("given λ: edge %q, warnings %q", fixed.SpectralEdge, JointWarnings(fixed))
	}
}

// TestJointPoorFitNamesTemporalWeight: when a temporal weight far too large holds the epochs
// of a moving companion to one image, the epochs fit their data worse than expected, and the
// verdict's advice names the setting that lowers that weight in a joint run (-temporal-weight),
// not the -spectral factor of an image cube, which does not apply to one.
func TestJointPoorFitNamesTemporalWeight(t *testing.T) {
	data := simEpochs(t, 3, 1.5, []float64{-1, 1}, 1)
	g := recon.Grid{N: 16, Pixel: 0.3 * recon.Mas}
	const mu = 1e-3
	ind, _ := independent(t, data, g, mu, 20)
	res := joint(t, data, ind, g, mu, 1e8, 20, 0, 1)
	poor := 0
	for _, w := range JointWarnings(res) {
		if strings.Contains(w, "-spectral") {
			t.Errorf("joint warning names -spectral: %q", w)
		}
		if strings.Contains(w, "fits its data at χ²ᵣ") {
			poor++
			if !strings.HasSuffix(w, "try a smaller "+TemporalSetting) {
				t.Errorf("joint warning of a poor fit does not name %s: %q", TemporalSetting, w)
			}
		}
	}
	if poor == 0 {
		t.Fatalf("no epoch warned of a poor fit at λ 1e8 (χ²ᵣ of the planes %v): the case is not exercised", chi2rs(res))
	}
}

// chi2rs returns the planes' χ²ᵣ of a cube.
func chi2rs(r *recon.CubeResult) []float64 {
	var out []float64
	for _, p := range r.Planes {
		out = append(out, p.Chi2r)
	}
	return out
}
