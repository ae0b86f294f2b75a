package recon_test

import (
	"fmt"
	"math"

	"vcz/dataset"
	"vcz/io/oifits"
	"vcz/recon"
)

// A file with three V² points on baselines of 10, 50 and 100 m at 2 µm, one of them flagged.
func Example() {
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
	fmt.Printf("V²: %d valid, %d flagged\n", s.Vis2.Valid, s.Vis2.Flagged)
	fmt.Printf("baselines %.0f–%.0f m, %.0f–%.0f Mλ\n", s.BaselineMin, s.BaselineMax, s.FreqMin/1e6, s.FreqMax/1e6)
	fmt.Printf("resolution %.3f mas, largest scale %.1f mas\n", s.Resolution/recon.Mas, s.LargestScale/recon.Mas)
	fmt.Printf("nights: %d\n", s.Nights)
	fmt.Printf("u of the first point: %.0f cycles/rad\n", math.Round(d.Vis2.U[0]))
	// Output:
	// V²: 2 valid, 1 flagged
	// baselines 10–50 m, 5–25 Mλ
	// resolution 4.125 mas, largest scale 41.3 mas
	// nights: 1
	// u of the first point: 3000000 cycles/rad
}
