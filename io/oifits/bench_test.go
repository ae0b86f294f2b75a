package oifits

import (
	"bytes"
	"fmt"
	"testing"
)

// moderateFile is a data set of the size of a night with a six-telescope
// array: one 64-channel instrument, 1500 OI_VIS2 rows (15 baselines × 100
// times) and 2000 OI_T3 rows (20 triangles × 100 times), about 4 MB.
func moderateFile() *File {
	const nw = 64
	f := sampleFile()
	f.Vis, f.Flux = nil, nil
	w := Wavelength{InsName: "WIDE64", EffWave: make([]float64, nw), EffBand: make([]float64, nw)}
	for i := range nw {
		w.EffWave[i] = float64(float32(1.5e-6 + float64(i)*1e-8))
		w.EffBand[i] = float64(float32(1e-8))
	}
	f.Wavelengths = append(f.Wavelengths, w)
	vec := func(v float64) []float64 {
		s := make([]float64, nw)
		for i := range s {
			s[i] = v + float64(i)*1e-3
		}
		return s
	}
	v2 := Vis2{DateObs: "2025-11-20", ArrName: "KESTREL", InsName: "WIDE64", Rows: make([]Vis2Row, 1500)}
	for i := range v2.Rows {
		v2.Rows[i] = Vis2Row{TargetID: 1, MJD: 60999 + float64(i)*1e-3, IntTime: 10, Data: vec(0.5), Err: vec(0.01),
			UCoord: float64(i%15) * 10, VCoord: float64(i % 7), StaIndex: [2]int{1, 2}, Flag: make([]bool, nw)}
	}
	t3 := T3{DateObs: "2025-11-20", ArrName: "KESTREL", InsName: "WIDE64", Rows: make([]T3Row, 2000)}
	for i := range t3.Rows {
		t3.Rows[i] = T3Row{TargetID: 1, MJD: 60999 + float64(i)*1e-3, IntTime: 10, Amp: vec(0.3), AmpErr: vec(0.02),
			Phi: vec(10), PhiErr: vec(1), U1Coord: 10, V1Coord: 20, U2Coord: -5, V2Coord: 3, StaIndex: [3]int{1, 2, 5}, Flag: make([]bool, nw)}
	}
	f.Vis2 = append(f.Vis2, v2)
	f.T3 = append(f.T3, t3)
	return f
}

func BenchmarkDecode(b *testing.B) {
	var buf bytes.Buffer
	if err := Encode(&buf, moderateFile()); err != nil {
		b.Fatal(err)
	}
	data := buf.Bytes()
	b.Run(fmt.Sprintf("bytes=%d", len(data)), func(b *testing.B) {
		b.ReportAllocs()
		b.SetBytes(int64(len(data)))
		for b.Loop() {
			if _, err := Decode(bytes.NewReader(data), "bench.oifits"); err != nil {
				b.Fatal(err)
			}
		}
	})
}

func BenchmarkEncode(b *testing.B) {
	f := moderateFile()
	var buf bytes.Buffer
	if err := Encode(&buf, f); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.SetBytes(int64(buf.Len()))
	for b.Loop() {
		buf.Reset()
		if err := Encode(&buf, f); err != nil {
			b.Fatal(err)
		}
	}
}
