package oifits

import "math"

// sampleFile returns an OIFITS v2 data set of an invented scenario: the
// three-telescope array "KESTREL" observing the invented targets
// "Zephyr-A" and "Zephyr-B" with a three-channel instrument "KBAND3" and a
// one-channel instrument "HNARROW". Every E-format value is exactly
// representable in float32 so a round trip can be compared exactly.
func sampleFile() *File {
	f := &File{
		Name:     "sample.oifits",
		Revision: 2,
		Primary: Primary{
			Origin: "vcz tests", Date: "2026-01-03T04:05:06", DateObs: "2025-11-20",
			Content: "OIFITS2", Telescop: "KESTREL", Instrume: "MULTI", Observer: "Test Observer",
			Object: "MULTI", InsMode: "LOWRES", Referenc: "none", ProgID: "T-001", ProcSoft: "vcz",
			ObsTech: "SCAN, PHASEREF", History: []string{"first history line", "second line"},
			Comments: []string{"a comment"},
		},
		Targets: []Target{
			{ID: 1, Name: "Zephyr-A", RAEp0: 83.5, DecEp0: -5.25, Equinox: 2000, RAErr: 1e-6, DecErr: 2e-6,
				SysVel: 1200, VelTyp: "LSR", VelDef: "OPTICAL", PMRA: 1e-7, PMDec: -2e-7, PMRAErr: 1e-9, PMDecErr: 1e-9,
				Parallax: 0.25, ParaErr: 0.125, SpecTyp: "K0III", Category: "SCI"},
			{ID: 3, Name: "Zephyr-B", RAEp0: 280.125, DecEp0: 38.75, Equinox: 2000, VelTyp: "UNKNOWN", VelDef: "OPTICAL",
				SpecTyp: "A0V", Category: "CAL"},
		},
		Arrays: []Array{{
			Name: "KESTREL", Frame: "GEOCENTRIC", XYZ: [3]float64{1942014.1, -5455311.5, -2725087.25},
			Stations: []Station{
				{TelName: "K1", StaName: "P01", Index: 1, Diameter: 1.75, XYZ: [3]float64{0, 0, 0}, FOV: 0.5, FOVType: "FWHM"},
				{TelName: "K2", StaName: "P07", Index: 2, Diameter: 1.75, XYZ: [3]float64{30.5, -12.25, 0.5}, FOV: 0.5, FOVType: "FWHM"},
				{TelName: "K3", StaName: "P12", Index: 5, Diameter: 1.75, XYZ: [3]float64{-10, 55.125, -1}, FOV: 0.5, FOVType: "FWHM"},
			},
		}},
		Wavelengths: []Wavelength{
			{InsName: "KBAND3", EffWave: []float64{2.0e-6, 2.2e-6, 2.4e-6}, EffBand: []float64{1e-7, 1e-7, 1e-7}},
			{InsName: "HNARROW", EffWave: []float64{1.65e-6}, EffBand: []float64{3e-7}},
		},
	}
	for i := range f.Wavelengths {
		for j := range f.Wavelengths[i].EffWave {
			f.Wavelengths[i].EffWave[j] = float64(float32(f.Wavelengths[i].EffWave[j]))
			f.Wavelengths[i].EffBand[j] = float64(float32(f.Wavelengths[i].EffBand[j]))
		}
	}
	for i := range f.Targets {
		t := &f.Targets[i]
		t.Equinox, t.Parallax, t.ParaErr = float64(float32(t.Equinox)), float64(float32(t.Parallax)), float64(float32(t.ParaErr))
	}
	f.Vis2 = []Vis2{{DateObs: "2025-11-20", ArrName: "KESTREL", InsName: "KBAND3", CorrName: "", Rows: []Vis2Row{
		{TargetID: 1, MJD: 60999.25, IntTime: 10, Data: []float64{0.81, 0.64, math.NaN()}, Err: []float64{0.01, 0.02, 0.03},
			UCoord: 30.5, VCoord: -12.25, StaIndex: [2]int{1, 2}, Flag: []bool{false, true, false}},
		{TargetID: 3, MJD: 60999.5, IntTime: 12.5, Data: []float64{0.5, 0.4, 0.3}, Err: []float64{0.05, -1, 0.05},
			UCoord: -40.5, VCoord: 67.375, StaIndex: [2]int{2, 5}, Flag: []bool{false, true, false}},
	}}, {DateObs: "2025-11-21", ArrName: "KESTREL", InsName: "HNARROW", Rows: []Vis2Row{
		{TargetID: 1, MJD: 61000.125, IntTime: 5, Data: []float64{0.7}, Err: []float64{0.02},
			UCoord: 10, VCoord: 55.125, StaIndex: [2]int{1, 5}, Flag: []bool{false}},
	}}}
	f.T3 = []T3{{DateObs: "2025-11-20", ArrName: "KESTREL", InsName: "KBAND3", Rows: []T3Row{
		{TargetID: 1, MJD: 60999.25, IntTime: 10, Amp: []float64{0.5, math.NaN(), 0.4}, AmpErr: []float64{0.05, math.NaN(), 0.04},
			Phi: []float64{12.5, -170, 3}, PhiErr: []float64{1, 2, 3}, U1Coord: 30.5, V1Coord: -12.25, U2Coord: -40.5, V2Coord: 67.375,
			StaIndex: [3]int{1, 2, 5}, Flag: []bool{false, false, false}},
	}}}
	f.Vis = []Vis{{DateObs: "2025-11-20", ArrName: "KESTREL", InsName: "KBAND3", AmpTyp: AmpCorrelatedFlux, PhiTyp: PhiDifferential, AmpUnit: "Jy",
		Rows: []VisRow{
			{TargetID: 1, MJD: 60999.25, IntTime: 10, Amp: []float64{1.5, 1.25, 1}, AmpErr: []float64{0.1, 0.1, 0.1},
				Phi: []float64{0, 5, -5}, PhiErr: []float64{0.5, 0.5, 0.5}, UCoord: 30.5, VCoord: -12.25, StaIndex: [2]int{1, 2},
				Flag: []bool{false, false, true}},
		}}}
	f.Flux = []Flux{{DateObs: "2025-11-20", InsName: "KBAND3", ArrName: "KESTREL", CalStat: "U", Unit: "ADU",
		Rows: []FluxRow{
			{TargetID: 1, MJD: 60999.25, IntTime: 10, Data: []float64{100, 110, 120}, Err: []float64{5, 5, 6}, StaIndex: 2, Flag: []bool{false, false, false}},
		}}}
	return f
}
