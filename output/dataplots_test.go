package output

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"vcz/dataset"
	"vcz/io/plots"
	"vcz/recon"
)

// everyTypeData is a small data set with every data type: two V², three triangles (the
// second without a usable amplitude, the third without a usable phase) and four complex
// visibilities, of which one has a differential phase and one a correlated-flux amplitude.
func everyTypeData() *dataset.Data {
	nan := math.NaN()
	d := &dataset.Data{Targets: []string{"Tessaly"}}
	d.Vis2 = dataset.Vis2Points{U: []float64{3e7, 0}, V: []float64{4e7, 2e7}, Lambda: []float64{1.6e-6, 1.7e-6},
		DLambda: []float64{1e-8, 1e-8}, MJD: []float64{60000, 60000}, Value: []float64{0.5, 0.8}, Err: []float64{0.02, 0.03}}
	d.T3 = dataset.T3Points{U1: []float64{3e7, 1e7, 2e7}, V1: []float64{4e7, 0, 1e7}, U2: []float64{1e7, 1e7, 1e7}, V2: []float64{0, 1e7, 0},
		Lambda: []float64{1.6e-6, 1.7e-6, 1.8e-6}, DLambda: []float64{1e-8, 1e-8, 1e-8}, MJD: []float64{60000, 60000, 60000},
		Amp: []float64{0.3, nan, 0.2}, AmpErr: []float64{0.01, nan, 0.02}, Phi: []float64{math.Pi / 2, -0.1, nan}, PhiErr: []float64{0.05, 0.1, nan},
		AmpOK: []bool{true, false, true}, PhiOK: []bool{true, true, false}}
	d.Vis = dataset.VisPoints{U: []float64{1e7, 2e7, 3e7, 4e7}, V: []float64{0, 0, 0, 0}, Lambda: []float64{1.6e-6, 1.7e-6, 1.8e-6, 1.9e-6},
		DLambda: []float64{1e-8, 1e-8, 1e-8, 1e-8}, MJD: []float64{60000, 60000, 60000, 60000},
		Amp: []float64{0.9, 0.8, 12, 0.6}, AmpErr: []float64{0.02, 0.02, 1, 0.02}, Phi: []float64{-math.Pi / 4, 0.2, 0.1, 0.3}, PhiErr: []float64{0.1, 0.1, 0.1, 0.1},
		AmpOK: []bool{true, true, true, true}, PhiOK: []bool{true, false, true, true},
		AmpTyp: []dataset.AmpType{dataset.AmpAbsolute, dataset.AmpAbsolute, dataset.AmpCorrelatedFlux, dataset.AmpAbsolute},
		PhiTyp: []dataset.PhiType{dataset.PhiAbsolute, dataset.PhiAbsolute, dataset.PhiAbsolute, dataset.PhiDifferential},
		Origin: []dataset.Origin{{Row: 1}, {Row: 2}, {Row: 3}, {Row: 4}}}
	return d
}

// Measurements picks the usable points of each type, in the type's unit: the indices, the
// values (phases converted from radians to degrees, π/2 → 90°), and the abscissa (a
// triangle's longest side: for (3, 4) and (1, 0) × 10⁷ the third side (4, 4) × 10⁷ of length
// 4√2 × 10⁷, Pauls et al. 2005, sect. 6.4).
func TestMeasurements(t *testing.T) {
	d := everyTypeData()
	for _, c := range []struct {
		t     dataset.DataType
		idx   []int
		first float64
		freq  float64
	}{
		{dataset.Vis2, []int{0, 1}, 0.5, 5e7},
		{dataset.T3Amp, []int{0, 2}, 0.3, 4 * math.Sqrt2 * 1e7},
		{dataset.T3Phi, []int{0, 1}, 90, 4 * math.Sqrt2 * 1e7},
		// Not the correlated flux (2).
		{dataset.VisAmp, []int{0, 1, 3}, 0.9, 1e7},
		// Not the unusable phase (1) nor the differential one (3).
		{dataset.VisPhi, []int{0, 2}, -45, 1e7},
		// The differential phase alone (OIFITS v2 PHITYP, Duvert, Young & Hummel 2017).
		{dataset.VisDiff, []int{3}, 0.3 * 180 / math.Pi, 4e7},
	} {
		m, idx := Measurements(d, c.t)
		info := c.t.Info()
		if m.Label != info.Label || m.Unit != info.Unit || m.Phase != info.Phase {
			t.Errorf("%v: label %q, unit %q, phase %v; want the table's %q, %q, %v", c.t, m.Label, m.Unit, m.Phase, info.Label, info.Unit, info.Phase)
		}
		if len(idx) != len(c.idx) || len(m.Value) != len(idx) || len(m.Err) != len(idx) || len(m.Wavelength) != len(idx) || len(m.Freq) != len(idx) {
			t.Errorf("%v: indices %v, want %v (values %d, errors %d, wavelengths %d, frequencies %d)", c.t, idx, c.idx, len(m.Value), len(m.Err), len(m.Wavelength), len(m.Freq))
			continue
		}
		for k := range idx {
			if idx[k] != c.idx[k] {
				t.Errorf("%v: indices %v, want %v", c.t, idx, c.idx)
				break
			}
		}
		if math.Abs(m.Value[0]-c.first) > 1e-12 || math.Abs(m.Freq[0]-c.freq) > 1e-6 {
			t.Errorf("%v: first point %g at %g, want %g at %g", c.t, m.Value[0], m.Freq[0], c.first, c.freq)
		}
	}
	// The counts of V² and triangles agree with the table of data types.
	for _, ty := range []dataset.DataType{dataset.Vis2, dataset.T3Amp, dataset.T3Phi} {
		if _, idx := Measurements(d, ty); len(idx) != d.Len(ty) {
			t.Errorf("%v: %d points, the data set counts %d", ty, len(idx), d.Len(ty))
		}
	}
}

// The plots of a fit: one per fitted type with data, in the order of the table, then the
// residuals; a type not fitted has none.
func TestModelPlotsEveryType(t *testing.T) {
	d := everyTypeData()
	pred := recon.PredictVis(d, func(dst []complex128, u, v []float64) {
		for k := range dst {
			dst[k] = complex(0.7, 0.1)
		}
	})
	for _, c := range []struct {
		use  dataset.DataType
		want []string
	}{
		{0, []string{"vis2", "t3amp", "t3phi", "visamp", "visphi", "visdiff", "residuals"}},
		{dataset.Vis2 | dataset.VisPhi, []string{"vis2", "visphi", "residuals"}},
	} {
		stem := filepath.Join(t.TempDir(), "x")
		var got []string
		mp := modelPlots{d: d, pred: pred, use: c.use, name: "model", title: func(w string) string { return w }, residualTitle: "residuals"}
		err := mp.write(func(fig *plots.Figure, err error, suffix string) error {
			if err != nil {
				return err
			}
			got = append(got, strings.TrimSuffix(strings.TrimPrefix(suffix, "-"), ".png"))
			return fig.WriteFile(stem + suffix)
		})
		if err != nil {
			t.Fatal(err)
		}
		if strings.Join(got, " ") != strings.Join(c.want, " ") {
			t.Errorf("use %v: plots %v, want %v", c.use, got, c.want)
		}
		for _, w := range got {
			if _, err := os.Stat(stem + "-" + w + ".png"); err != nil {
				t.Error(err)
			}
		}
	}
	// The model values of a phase are in degrees: arg(0.7 + 0.1i) = 8.13°.
	_, idx := Measurements(d, dataset.VisPhi)
	if mv := ModelValues(pred, dataset.VisPhi, idx); math.Abs(mv[0]-math.Atan2(0.1, 0.7)*180/math.Pi) > 1e-9 {
		t.Errorf("model phase %g°, want %g°", mv[0], math.Atan2(0.1, 0.7)*180/math.Pi)
	}
}
