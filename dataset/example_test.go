package dataset_test

import (
	"errors"
	"fmt"

	"vcz/dataset"
	"vcz/io/oifits"
)

// A file with three V² points on baselines of 10, 50 and 100 m at 2 µm, one of them flagged.
func ExampleFromFiles() {
	f := &oifits.File{
		Name:        "example.oifits",
		Targets:     []oifits.Target{{ID: 1, Name: "Example star"}},
		Wavelengths: []oifits.Wavelength{{HDU: 2, InsName: "CAM", EffWave: []float64{2e-6}, EffBand: []float64{1e-7}}},
		Vis2: []oifits.Vis2{{HDU: 3, InsName: "CAM", Rows: []oifits.Vis2Row{
			{TargetID: 1, MJD: 60100.1, Data: []float64{0.95}, Err: []float64{0.02}, UCoord: 6, VCoord: 8, Flag: []bool{false}},
			{TargetID: 1, MJD: 60100.2, Data: []float64{0.60}, Err: []float64{0.02}, UCoord: 30, VCoord: 40, Flag: []bool{false}},
			{TargetID: 1, MJD: 60101.1, Data: []float64{0.20}, Err: []float64{0.02}, UCoord: 60, VCoord: 80, Flag: []bool{true}},
		}}},
	}
	d, err := dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
	if err != nil {
		fmt.Println(err)
		return
	}
	s := d.Summarize()
	fmt.Printf("V²: %d valid, %d flagged, %d usable measurements\n", s.Vis2.Valid, s.Vis2.Flagged, d.Len(dataset.AllTypes))
	fmt.Printf("baselines %.0f–%.0f m, types %v\n", s.BaselineMin, s.BaselineMax, d.Available())

	// A usable point with a negative error is an *Error with its position.
	f.Vis2[0].Rows[1].Err[0] = -0.02
	_, err = dataset.FromFiles([]*oifits.File{f}, dataset.Selection{})
	fmt.Println(err)
	var e *dataset.Error
	if errors.As(err, &e) {
		fmt.Printf("HDU %d (%s), row %d, column %s\n", e.HDU, e.ExtName, e.Row, e.Column)
	}
	// Output:
	// V²: 2 valid, 1 flagged, 2 usable measurements
	// baselines 10–50 m, types vis2
	// example.oifits: OI_VIS2 (HDU 3) row 2: VIS2ERR is -0.02; errors must be positive
	// HDU 3 (OI_VIS2), row 2, column VIS2ERR
}

func ExampleParseDataTypes() {
	t, err := dataset.ParseDataTypes("vis2, T3")
	fmt.Println(t, err)
	for _, u := range dataset.DataTypes() {
		i := u.Info()
		fmt.Printf("%-7s %-4s %s\n", i.Word, i.Key, i.Label)
	}
	_, err = dataset.ParseDataTypes("closure")
	fmt.Println(err)
	// Output:
	// vis2+t3amp+t3phi <nil>
	// vis2    V2   V²
	// t3amp   T3A  T3 amplitude
	// t3phi   T3P  closure phase
	// visamp  VA   visibility amplitude
	// visphi  VP   visibility phase
	// visdiff VD   differential phase
	// unknown data type "closure" (use vis2, t3amp, t3phi, t3, visamp, visphi, visdiff, vis)
}
