package oifits_test

import (
	"bytes"
	"errors"
	"fmt"

	"vcz/io/oifits"
)

// A minimal data set of an invented scenario: one target, one
// two-channel instrument and one squared visibility.
func smallFile() *oifits.File {
	return &oifits.File{
		Name:    "night1.oifits",
		Targets: []oifits.Target{{ID: 1, Name: "Zephyr-A", RAEp0: 83.5, DecEp0: -5.25, Equinox: 2000}},
		Arrays: []oifits.Array{{Name: "KESTREL", Frame: "GEOCENTRIC", Stations: []oifits.Station{
			{TelName: "K1", StaName: "P01", Index: 1, Diameter: 1.8},
			{TelName: "K2", StaName: "P07", Index: 2, Diameter: 1.8, XYZ: [3]float64{30, -12, 0}}}}},
		Wavelengths: []oifits.Wavelength{{InsName: "KBAND2", EffWave: []float64{2e-6, 2.2e-6}, EffBand: []float64{1e-7, 1e-7}}},
		Vis2: []oifits.Vis2{{ArrName: "KESTREL", InsName: "KBAND2", Rows: []oifits.Vis2Row{{
			TargetID: 1, MJD: 60999.25, IntTime: 10, Data: []float64{0.81, 0.64}, Err: []float64{0.01, 0.02},
			UCoord: 30, VCoord: -12, StaIndex: [2]int{1, 2}, Flag: []bool{false, true}}}}},
	}
}

func Example() {
	var buf bytes.Buffer
	if err := oifits.Encode(&buf, smallFile()); err != nil {
		fmt.Println(err)
		return
	}
	size := buf.Len()
	f, err := oifits.Decode(&buf, "night1.oifits")
	if err != nil {
		fmt.Println(err)
		return
	}
	r := f.Vis2[0].Rows[0]
	fmt.Printf("OIFITS %d, %d bytes, target %s\n", f.Revision, size, f.Targets[0].Name)
	fmt.Printf("OI_VIS2 in HDU %d: VIS2DATA %v ± %v, FLAG %v, date %s\n", f.Vis2[0].HDU, r.Data, r.Err, r.Flag, f.Vis2[0].DateObs)
	// Output:
	// OIFITS 2, 31680 bytes, target Zephyr-A
	// OI_VIS2 in HDU 5: VIS2DATA [0.81 0.64] ± [0.01 0.02], FLAG [false true], date 2025-11-20
}

func ExampleError() {
	f := smallFile()
	f.Vis2[0].Rows[0].Err[0] = -0.01
	var buf bytes.Buffer
	err := oifits.Encode(&buf, f)
	fmt.Println(err)
	var e *oifits.Error
	if errors.As(err, &e) {
		fmt.Println("row", e.Row, "column", e.Column)
	}
	// Output:
	// night1.oifits: OI_VIS2 row 1: VIS2ERR is -0.01 in channel 1; errors must be positive
	// row 1 column VIS2ERR
}
