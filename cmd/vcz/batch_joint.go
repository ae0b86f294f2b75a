package main

import (
	"fmt"
	"io"
	"math"
	"path/filepath"
	"runtime"
	"time"

	"github.com/BurntSushi/toml"

	"vcz/io/fitsimage"
	"vcz/io/preview"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/batch"
	"vcz/recon/model"
	"vcz/workflow"
)

func tomlDecode(src []byte, v any) (toml.MetaData, error) {
	return toml.Decode(string(src), v)
}

// keyLine is the line of key k in a TOML source, in the index-th element of an array of
// tables (any element when index < 0).
func keyLine(src []byte, k toml.Key, index int) int { return model.KeyLine(src, k, index) }

func runtimeProcs() int { return runtime.GOMAXPROCS(0) }

// commonGrid fixes one grid for all epochs of a joint reconstruction: the grid the
// options give for the first readable epoch.
func commonGrid(epochs []*batchEpoch) error {
	if len(epochs) < 2 {
		return badInputf("batch: -joint needs at least two epochs")
	}
	var lastErr error
	for _, e := range epochs {
		_, d, err := workflow.ReadData(e.files, e.spec.Selection())
		if err != nil {
			lastErr = err
			continue
		}
		p, _, err := e.spec.Problem(d)
		if err != nil {
			return badInput(err)
		}
		ch, err := recon.ChooseGrid(d, p.GridOptions)
		if err != nil {
			lastErr = err
			continue
		}
		for _, o := range epochs {
			o.spec.Grid, o.spec.Pixel, o.spec.FOV = ch.N, ch.Pixel, 0
		}
		return nil
	}
	return badInputf("batch: no epoch to choose the common grid from: %v", lastErr)
}

// runJoint reconstructs all epochs together from their independent images and writes
// joint.fits (the cube) and EPOCH-joint.fits/.png.
func runJoint(epochs []*batchEpoch, rows []batch.Row, out string, lambda float64, stdout, stderr io.Writer, quiet bool) error {
	j := &batch.Joint{Parallel: true}
	starts := make([][]float64, len(epochs))
	var grid recon.Grid
	var ra, dec float64
	hasRADec := false
	maxIter := 0
	for t, e := range epochs {
		im, err := fitsimage.ReadFile(filepath.Join(out, rows[t].FITS))
		if err != nil {
			return failure(err)
		}
		g := recon.Grid{N: im.NX, Pixel: im.Pixel}
		if t == 0 {
			grid, ra, dec, hasRADec = g, im.RA, im.Dec, im.HasRADec
		} else if g.N != grid.N || math.Abs(g.Pixel-grid.Pixel) > 1e-9*grid.Pixel {
			return failure(fmt.Errorf("epoch %s is on a %d-pixel grid of %g mas, the first on %d of %g mas; rerun with -force",
				e.name, g.N, g.Pixel/recon.Mas, grid.N, grid.Pixel/recon.Mas))
		}
		starts[t] = im.Data[:g.N*g.N]
		_, d, err := workflow.ReadData(e.files, e.spec.Selection())
		if err != nil {
			return err
		}
		p, s, err := e.spec.Problem(d)
		if err != nil {
			return badInput(err)
		}
		maxIter = max(maxIter, s.MaxIter)
		var reg recon.Regularizer
		if p.Reg != nil {
			if reg, err = p.Reg(g); err != nil {
				return failure(err)
			}
		}
		je, err := batch.NewJointEpoch(d, g, p.Terms, reg, rows[t].Weight, e.spec.Workers)
		if err != nil {
			return failure(fmt.Errorf("epoch %s: %w", e.name, err))
		}
		if p.Support > 0 {
			je.Upper = supportUpper(g, p.Support)
		}
		j.Epochs = append(j.Epochs, je)
	}
	j.NPix = grid.N * grid.N
	tty := isTerminal(stderr)
	var last time.Time
	res, err := batch.SolveJoint(j, starts, lambda, batch.JointSettings{MaxIter: maxIter,
		Progress: func(lam float64, it int, f float64) bool {
			if quiet {
				return true
			}
			text := fmt.Sprintf("joint: temporal weight %-9.3g iter %4d  objective %.6g", lam, it, f)
			if tty {
				if time.Since(last) > 100*time.Millisecond {
					fmt.Fprintf(stderr, "\r\033[K%s", text)
					last = time.Now()
				}
			} else if it%50 == 0 {
				fmt.Fprintln(stderr, text)
			}
			return true
		}})
	if tty && !quiet {
		fmt.Fprint(stderr, "\r\033[K")
	}
	if err != nil {
		return failure(err)
	}
	n := grid.N
	cube := &fitsimage.Image{NX: n, NY: n, Planes: len(epochs), Pixel: grid.Pixel, RA: ra, Dec: dec, HasRADec: hasRADec,
		BUnit: "flux/pixel", Normalized: true}
	cube.Cards = append(cube.Cards,
		fitsimage.Card{Key: "CREATOR", Value: output.Creator, Comment: "software that made this image"},
		fitsimage.Card{Key: "TEMPWT", Value: res.Lambda, Comment: "temporal weight lambda"},
		fitsimage.Card{Key: "CHI2R", Value: res.Chi2rAll, Comment: "reduced chi2 of all epochs"},
		fitsimage.Card{Key: "NITER", Value: res.Iter, Comment: "iterations of the kept run"})
	for t, e := range epochs {
		cube.Data = append(cube.Data, res.Images[t]...)
		mid := (rows[t].MJDMin + rows[t].MJDMax) / 2
		cube.Cards = append(cube.Cards,
			fitsimage.Card{Key: fmt.Sprintf("MJD%03d", t+1), Value: mid, Comment: output.ASCII("mean MJD of plane " + fmt.Sprint(t+1))},
			fitsimage.Card{Key: fmt.Sprintf("EPNAM%03d", t+1), Value: output.ASCII(output.Truncate(e.name, 68)), Comment: "epoch name"},
			fitsimage.Card{Key: fmt.Sprintf("CHI2R%03d", t+1), Value: res.Chi2r[t], Comment: "reduced chi2 of this epoch"})
	}
	for _, s := range res.Path {
		cube.Cards = append(cube.Cards, fitsimage.Card{Key: "HISTORY", Value: fmt.Sprintf("temporal weight %.6g: chi2r %.5g, sum |dx|^2 %.5g, %s", s.Lambda, s.Chi2r, s.Temporal, map[bool]string{true: "kept", false: "rejected"}[s.Accepted])})
	}
	if err := fitsimage.WriteFile(filepath.Join(out, "joint.fits"), cube); err != nil {
		return failure(err)
	}
	jrows := make([]batch.Row, len(rows))
	for t, e := range epochs {
		im := &fitsimage.Image{NX: n, NY: n, Pixel: grid.Pixel, Data: res.Images[t], RA: ra, Dec: dec, HasRADec: hasRADec,
			BUnit: "flux/pixel", Normalized: true, Cards: []fitsimage.Card{
				{Key: "CREATOR", Value: output.Creator, Comment: "software that made this image"},
				{Key: "TEMPWT", Value: res.Lambda, Comment: "temporal weight lambda of the joint run"},
				{Key: "CHI2R", Value: res.Chi2r[t], Comment: "reduced chi2 of this epoch"},
				{Key: "MJD-AVG", Value: (rows[t].MJDMin + rows[t].MJDMax) / 2, Comment: "mean MJD of the epoch"},
			}}
		base := filepath.Join(out, e.name+"-joint")
		if err := fitsimage.WriteFile(base+".fits", im); err != nil {
			return failure(err)
		}
		opt := preview.Options{Title: e.name + " (joint)", Subtitle: preview.FormatMJDRange(rows[t].MJDMin, rows[t].MJDMax), Pixel: grid.Pixel / recon.Mas}
		if err := preview.WriteFile(base+".png", res.Images[t], n, n, opt); err != nil {
			return failure(err)
		}
		jrows[t] = rows[t]
	}
	if err := writeMontage(out, "-joint", jrows, fmt.Sprintf("%d epochs, joint (λ = %.3g)", len(epochs), res.Lambda)); err != nil && !quiet {
		fmt.Fprintf(stderr, "note: joint montage: %v\n", err)
	}
	if !quiet {
		fmt.Fprintf(stdout, "Joint: temporal weight %.4g, χ²ᵣ %.4g over all epochs, %d iterations; wrote %s\n",
			res.Lambda, res.Chi2rAll, res.Iter, filepath.Join(out, "joint.fits"))
	}
	return nil
}

// supportUpper is the upper bound of a support of radius r: 0 outside, +Inf inside.
func supportUpper(g recon.Grid, r float64) []float64 {
	n := g.N
	u := make([]float64, n*n)
	for iy := range n {
		for ix := range n {
			x, y := float64(ix-n/2)*g.Pixel, float64(iy-n/2)*g.Pixel
			if x*x+y*y <= r*r {
				u[iy*n+ix] = math.Inf(1)
			}
		}
	}
	return u
}
