package workflow

import (
	"fmt"
	"math"
	"path/filepath"

	"vcz/dataset"
	"vcz/io/fitsimage"
	"vcz/io/preview"
	"vcz/output"
	"vcz/recon"
	"vcz/recon/batch"
)

// CommonGrid fixes one grid for all epochs, so that their images compare pixel for pixel
// (a batch's montage and animation, a joint reconstruction): the finest pixel and the widest
// field that the options give for any readable epoch's data, with a friendly number of
// pixels (recon.Friendly) of at most the options' maximum (256 by default; above it the pixel
// is enlarged), or the options' -n when given. It is written into every epoch's Spec (n and
// pixel). Its errors, when no epoch can be read or gridded, are *InputError.
func CommonGrid(epochs []*Epoch) error {
	var lastErr error
	pix, fov := math.Inf(1), 0.0
	var opt recon.GridOptions
	for _, e := range epochs {
		_, d, err := ReadData(e.Files, e.Spec.Selection())
		if err != nil {
			lastErr = err
			continue
		}
		p, _, err := e.Spec.Problem(d)
		if err != nil {
			return inputError("", err)
		}
		ch, err := recon.ChooseGrid(d, p.GridOptions)
		if err != nil {
			lastErr = err
			continue
		}
		opt = p.GridOptions
		pix, fov = math.Min(pix, ch.Pixel), math.Max(fov, float64(ch.N)*ch.Pixel)
	}
	if fov == 0 {
		return inputErrorf("batch: no epoch to choose the common grid from: %v", lastErr)
	}
	n := epochs[0].Spec.Grid
	if n <= 0 {
		maxN := opt.MaxN
		if maxN <= 0 {
			maxN = 256
		}
		n = int(math.Ceil(fov/pix - 1e-9))
		n += n % 2
		for !recon.Friendly(n) {
			n += 2
		}
		if n > maxN {
			for n = maxN; !recon.Friendly(n) && n > 2; n -= 2 {
			}
			pix = fov / float64(n)
		}
	}
	for _, o := range epochs {
		o.Spec.Grid, o.Spec.Pixel, o.Spec.FOV = n, pix, 0
	}
	return nil
}

// JointResult is the outcome of Batch.Joint: the joint images on the common grid.
type JointResult struct {
	// Cube is the joint reconstruction, one plane per epoch (batch.JointProblem).
	Cube   *recon.CubeResult
	Grid   recon.Grid
	Images [][]float64 // per epoch, normalised to flux 1
	Lambda float64     // the temporal weight λ
	// Chi2r is each epoch's χ²ᵣ and Chi2rAll Σχ²/ΣN over all epochs.
	Chi2r    []float64
	Chi2rAll float64
	Iter     int // iterations of the last sweep over the epochs
	// Warnings is the quality verdict of the joint run (batch.JointWarnings), also
	// in the header of joint.fits and of each EPOCH-joint.fits (NWARN, WARNn).
	Warnings []string
}

// JointSettings control Joint.
type JointSettings struct {
	// Lambda is the temporal weight λ; 0 chooses it (batch.JointProblem).
	Lambda float64
	// Progress, when non-nil, is called after every iteration of an epoch's run; its
	// Stage names the temporal weight being tried, the sweep and the epoch's plane.
	Progress func(recon.Progress) bool
}

// Joint reconstructs the epochs together with a temporal regularizer, as an image cube
// along time (batch.JointProblem, recon.SolveCube), from their independent images: results
// are those of Batch.Run for the same epochs, all done. The first epoch's options give the
// data terms, regularizer, support, smearing and iteration limit of the joint run (a batch
// shares them; only the selection of dates differs). An image in memory is used as it is;
// the FITS file is read only for an epoch found complete. It writes joint.fits (the cube,
// one plane per epoch on a time axis at the middle of each epoch), EPOCH-joint.fits and
// .png into the batch's folder, and returns the result.
func (b *Batch) Joint(epochs []*Epoch, results []EpochResult, s JointSettings) (*JointResult, error) {
	out := b.Out
	var grid recon.Grid
	var ra, dec float64
	hasRADec := false
	var base recon.Problem
	var settings recon.Settings
	var eps []batch.JointEpoch
	var datas []*dataset.Data // of each epoch
	for t, e := range epochs {
		row := results[t].Row
		im := results[t].Image
		if im == nil {
			var err error
			if im, err = fitsimage.ReadFile(filepath.Join(out, row.FITS)); err != nil {
				return nil, err
			}
		}
		g := recon.Grid{N: im.NX, Pixel: im.Pixel}
		if t == 0 {
			grid, ra, dec, hasRADec = g, im.RA, im.Dec, im.HasRADec
		} else if g.N != grid.N || math.Abs(g.Pixel-grid.Pixel) > 1e-9*grid.Pixel {
			return nil, fmt.Errorf("epoch %s is on a %d-pixel grid of %g mas, the first on %d of %g mas; rerun with -force",
				e.Name, g.N, g.Pixel/recon.Mas, grid.N, grid.Pixel/recon.Mas)
		}
		_, d, err := ReadData(e.Files, e.Spec.Selection())
		if err != nil {
			return nil, err
		}
		p, st, err := e.Spec.Problem(d)
		if err != nil {
			return nil, inputError("", err)
		}
		if t == 0 {
			base, settings = p, st
		}
		settings.MaxIter = max(settings.MaxIter, st.MaxIter)
		datas = append(datas, d)
		eps = append(eps, batch.JointEpoch{Data: d, Start: im.Data[:g.N*g.N], Weight: row.Weight, Label: e.Name,
			MJDMin: row.MJDMin, MJDMax: row.MJDMax})
	}
	base.Grid, base.GridOptions, base.Choice = grid, recon.GridOptions{}, nil
	cp, err := batch.JointProblem(base, eps, s.Lambda)
	if err != nil {
		return nil, inputError("", err)
	}
	settings.Progress = func(pr recon.Progress) bool {
		return !Interrupted() && (s.Progress == nil || s.Progress(pr))
	}
	cr, err := recon.SolveCube(cp, settings)
	if err == nil && Interrupted() {
		err = ErrInterrupted
	}
	if err != nil {
		return nil, orInterrupted(fmt.Errorf("joint reconstruction: %w", err))
	}
	res := &JointResult{Cube: cr, Grid: grid, Lambda: cr.SpectralWeight, Chi2rAll: cr.Chi2r, Iter: cr.Iter,
		Warnings: output.NonNil(batch.JointWarnings(cr))}
	for _, pl := range cr.Planes {
		res.Images = append(res.Images, pl.Image)
		res.Chi2r = append(res.Chi2r, pl.Chi2r)
	}
	n := grid.N
	cube := &fitsimage.Image{NX: n, NY: n, Planes: len(epochs), Pixel: grid.Pixel, RA: ra, Dec: dec, HasRADec: hasRADec,
		BUnit: output.BUnit, Normalized: true}
	cube.Cards = append(cube.Cards,
		fitsimage.Card{Key: "CREATOR", Value: output.Creator, Comment: "software that made this image"},
		fitsimage.Card{Key: "TEMPWT", Value: res.Lambda, Comment: "temporal weight lambda"},
		fitsimage.Card{Key: "CHI2R", Value: res.Chi2rAll, Comment: "reduced chi2 of all epochs"},
		fitsimage.Card{Key: "NITER", Value: res.Iter, Comment: "iterations of the last sweep over the epochs"})
	cube.Cards = append(cube.Cards, output.WarningCards(res.Warnings)...)
	// The third axis is time, each plane at the middle of its epoch (fitsimage.Image.Time),
	// when the epochs come in time order; otherwise it stays the plane number and each
	// plane's MJD is in MJDnnn.
	mids := make([]float64, len(epochs))
	inOrder := true
	for t := range epochs {
		row := results[t].Row
		mids[t] = (row.MJDMin + row.MJDMax) / 2
		inOrder = inOrder && (t == 0 || mids[t] > mids[t-1])
	}
	if inOrder {
		cube.Time = mids
	}
	for t, e := range epochs {
		cube.Data = append(cube.Data, res.Images[t]...)
		if !inOrder {
			cube.Cards = append(cube.Cards, fitsimage.Card{Key: fmt.Sprintf("MJD%03d", t+1), Value: mids[t], Comment: output.ASCII("mean MJD of plane " + fmt.Sprint(t+1))})
		}
		cube.Cards = append(cube.Cards,
			fitsimage.Card{Key: fmt.Sprintf("EPNAM%03d", t+1), Value: output.ASCII(e.Name), Comment: "epoch name"},
			fitsimage.Card{Key: fmt.Sprintf("CHI2R%03d", t+1), Value: res.Chi2r[t], Comment: "reduced chi2 of this epoch"})
	}
	for _, s := range cr.Path {
		cube.Cards = append(cube.Cards, fitsimage.Card{Key: "HISTORY", Value: fmt.Sprintf("temporal weight %.6g: chi2r %.5g, sum |dx|^2 %.5g, %s", s.Weight, s.Chi2r, s.Value, map[bool]string{true: "kept", false: "rejected"}[s.Accepted])})
	}
	if err := fitsimage.WriteFile(filepath.Join(out, jointCube), cube); err != nil {
		return nil, err
	}
	for t, e := range epochs {
		row := results[t].Row
		im := &fitsimage.Image{NX: n, NY: n, Pixel: grid.Pixel, Data: res.Images[t], RA: ra, Dec: dec, HasRADec: hasRADec,
			BUnit: output.BUnit, Normalized: true, Cards: []fitsimage.Card{
				{Key: "CREATOR", Value: output.Creator, Comment: "software that made this image"},
				{Key: "TEMPWT", Value: res.Lambda, Comment: "temporal weight lambda of the joint run"},
				{Key: "CHI2R", Value: res.Chi2r[t], Comment: "reduced chi2 of this epoch"},
				{Key: "MJD-AVG", Value: (row.MJDMin + row.MJDMax) / 2, Comment: "mean MJD of the epoch"},
			}}
		im.Cards = append(im.Cards, output.WarningCards(res.Warnings)...)
		base := filepath.Join(out, e.Name+jointSuffix)
		if err := fitsimage.WriteFile(base+extFITS, im); err != nil {
			return nil, err
		}
		opt := jointPreviewOptions(e.Name, row, grid.Pixel, datas[t], res.Chi2r[t], b.Stretch)
		if err := preview.WriteFile(base+extPNG, res.Images[t], n, n, opt); err != nil {
			return nil, err
		}
	}
	return res, nil
}

// jointPreviewOptions are the options of the preview of an epoch's joint image: its name
// and dates, its χ²ᵣ in the joint run, and, as the preview of an epoch's own image has them,
// the colour bar's label and the circle of the nominal resolution of its data d; pixel is
// in rad.
func jointPreviewOptions(name string, row batch.Row, pixel float64, d *dataset.Data, chi2r float64, st preview.Stretch) preview.Options {
	return preview.Options{Title: name + " (joint)",
		Subtitle:      fmt.Sprintf("%s · χ²ᵣ %.2f", preview.FormatMJDRange(row.MJDMin, row.MJDMax), chi2r),
		Pixel:         pixel / recon.Mas,
		Beam:          preview.Beam{Major: d.Summarize().Resolution / recon.Mas},
		ColorbarLabel: "flux per pixel (total 1)",
		Stretch:       st}
}

// WriteJointMontage draws the joint images as montage-joint.png and epochs-joint.gif in
// the batch's folder, from memory.
func (b *Batch) WriteJointMontage(results []EpochResult, jr *JointResult) error {
	rows := make([]batch.Row, len(results))
	images := make([]*fitsimage.Image, len(results))
	n := jr.Grid.N
	for t, r := range results {
		rows[t] = r.Row
		images[t] = &fitsimage.Image{NX: n, NY: n, Pixel: jr.Grid.Pixel, Data: jr.Images[t]}
	}
	return WriteMontage(b.Out, jointSuffix, rows, images, fmt.Sprintf("%d epochs, joint (λ = %.3g)", len(results), jr.Lambda), b.Stretch)
}
