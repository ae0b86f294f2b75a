package fitsimage

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"vcz/io/fitsfile/fitstest"
)

const script = "../../testdata/fitsimage/astropy_image.py"

const mas = math.Pi / (180 * 3600e3)

// testImage returns an asymmetric image so that flips and transposes are
// visible: pixel (ix, iy) of plane p holds p*1000 + iy*nx + ix + 0.25.
func testImage(nx, ny, planes int) *Image {
	im := &Image{NX: nx, NY: ny, Planes: planes, Pixel: 0.3 * mas, RA: 83.5, Dec: -30.25, HasRADec: true,
		BUnit: "flux/pixel", Normalized: true,
		Cards: []Card{
			{Key: "OBJECT", Value: "Zephyr-A", Comment: "target"},
			{Key: "NITER", Value: 42, Comment: "iterations"},
			{Key: "CHI2R", Value: 1.0625},
			{Key: "WTAUTO", Value: true},
			{Key: "HISTORY", Value: "data file 1: night1.oifits"},
			{Key: "HISTORY", Comment: "second history line"},
			{Key: "COMMENT", Value: "One image consistent with the data."},
		}}
	im.Data = make([]float64, nx*ny*max(planes, 1))
	for i := range im.Data {
		im.Data[i] = float64((i/(nx*ny))*1000+i%(nx*ny)) + 0.25
	}
	return im
}

func TestRoundTrip(t *testing.T) {
	for _, tc := range []struct{ nx, ny, planes int }{{8, 8, 0}, {7, 5, 1}, {6, 4, 3}} {
		t.Run(fmt.Sprintf("%dx%dx%d", tc.nx, tc.ny, tc.planes), func(t *testing.T) {
			want := testImage(tc.nx, tc.ny, tc.planes)
			path := filepath.Join(t.TempDir(), "img.fits")
			if err := WriteFile(path, want); err != nil {
				t.Fatal(err)
			}
			fitstest.Verify(t, path)
			got, err := ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			if tc.planes == 1 {
				want.Planes = 0 // a single plane is written as a 2-D image
			}
			// HISTORY given in Comment comes back in Value.
			want.Cards[5] = Card{Key: "HISTORY", Value: "second history line"}
			if !reflect.DeepEqual(got, want) {
				t.Errorf("round trip:\n got %+v\nwant %+v", got, want)
			}
		})
	}
}

func TestNoRADec(t *testing.T) {
	im := testImage(4, 4, 0)
	im.HasRADec = false
	var buf bytes.Buffer
	if err := Encode(&buf, im); err != nil {
		t.Fatal(err)
	}
	got, err := Decode(buf.Bytes())
	if err != nil {
		t.Fatal(err)
	}
	if got.HasRADec || got.RA != 0 || got.Dec != 0 {
		t.Errorf("HasRADec %v RA %v Dec %v", got.HasRADec, got.RA, got.Dec)
	}
}

func TestEncodeErrors(t *testing.T) {
	for _, tc := range []struct {
		mod  func(*Image)
		want string
	}{
		{func(im *Image) { im.Data = im.Data[1:] }, "image has 15 values"},
		{func(im *Image) { im.Pixel = 0 }, "pixel size 0 rad"},
		{func(im *Image) { im.NX = 0 }, "image size 0 × 4 × 0"},
		{func(im *Image) { im.Cards = append(im.Cards, Card{Key: "CDELT1", Value: 1.0}) }, "keyword CDELT1 is set by the writer"},
		{func(im *Image) { im.Cards = append(im.Cards, Card{Key: "TOOLONGKEY", Value: 1}) }, "invalid keyword"},
		{func(im *Image) { im.Cards = append(im.Cards, Card{Key: "X", Value: []int{1}}) }, "unsupported value type"},
		{func(im *Image) { im.Dec = 95 }, "is not a sky position"},
	} {
		im := testImage(4, 4, 0)
		tc.mod(im)
		err := Encode(new(bytes.Buffer), im)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("err = %v, want it to contain %q", err, tc.want)
		}
	}
}

// sinInverse converts the intermediate coordinates (x east, y north, rad)
// of the orthographic (SIN) projection about (ra0, dec0) to (ra, dec),
// all in radians: dec = asin(y cos dec0 + sin dec0 sqrt(1-x²-y²)),
// ra = ra0 + atan2(x, cos dec0 sqrt(1-x²-y²) - y sin dec0)
// (Calabretta & Greisen 2002, A&A 395, 1077, sect. 5.1.5, combined with
// the spherical rotation of their sect. 2.3 for a zenithal projection).
func sinInverse(x, y, ra0, dec0 float64) (ra, dec float64) {
	z := math.Sqrt(1 - x*x - y*y)
	dec = math.Asin(y*math.Cos(dec0) + math.Sin(dec0)*z)
	ra = ra0 + math.Atan2(x, math.Cos(dec0)*z-y*math.Sin(dec0))
	return ra, dec
}

type checkOut struct {
	Shape   []int       `json:"shape"`
	Data    []float64   `json:"data"`
	BUnit   string      `json:"bunit"`
	Scales  []float64   `json:"scales_deg"`
	CDelt1  float64     `json:"cdelt1_sign"`
	World   [][]float64 `json:"world"`
	History []string    `json:"history"`
}

// TestAstropyWCS checks with astropy.io.fits and astropy.wcs that a
// written image has the data, pixel scale, orientation and reference pixel
// of the project's conventions: pixel (ix, iy) at x = -(ix - n/2)·pixel
// (east), y = (iy - n/2)·pixel (north).
func TestAstropyWCS(t *testing.T) {
	for _, tc := range []struct {
		nx, ny, planes int
		pixel          float64
	}{{8, 6, 0, 0.3 * mas}, {5, 5, 2, 0.3 * mas}, {16, 16, 0, 0.05 * math.Pi / 180}} {
		im := testImage(tc.nx, tc.ny, tc.planes)
		im.Pixel = tc.pixel
		path := filepath.Join(t.TempDir(), "wcs.fits")
		if err := WriteFile(path, im); err != nil {
			t.Fatal(err)
		}
		pix := [][2]int{{tc.nx / 2, tc.ny / 2}, {0, 0}, {tc.nx - 1, 0}, {0, tc.ny - 1}, {tc.nx/2 + 1, tc.ny / 2}, {tc.nx / 2, tc.ny/2 + 1}}
		args := []string{"check", path}
		for _, p := range pix {
			args = append(args, fmt.Sprintf("%d,%d", p[0], p[1]))
		}
		var got checkOut
		if err := json.Unmarshal(fitstest.RunPython(t, script, args...), &got); err != nil {
			t.Fatal(err)
		}
		wantShape := []int{tc.ny, tc.nx}
		if tc.planes > 1 {
			wantShape = []int{tc.planes, tc.ny, tc.nx}
		}
		if !reflect.DeepEqual(got.Shape, wantShape) {
			t.Errorf("astropy shape %v, want %v (numpy order: plane, y, x)", got.Shape, wantShape)
		}
		if !reflect.DeepEqual(got.Data, im.Data) {
			t.Errorf("astropy data differ")
		}
		if got.BUnit != "flux/pixel" || len(got.History) != 2 {
			t.Errorf("astropy BUNIT %q HISTORY %q", got.BUnit, got.History)
		}
		deg := tc.pixel * 180 / math.Pi
		for i, s := range got.Scales {
			if math.Abs(s-deg) > 1e-12*deg {
				t.Errorf("astropy pixel scale %d = %g deg, want %g", i, s, deg)
			}
		}
		if got.CDelt1 != -1 {
			t.Errorf("astropy x scale sign %v; want -1 (east to the left)", got.CDelt1)
		}
		ra0, dec0 := im.RA*math.Pi/180, im.Dec*math.Pi/180
		for k, p := range pix {
			x := -float64(p[0]-tc.nx/2) * tc.pixel
			y := float64(p[1]-tc.ny/2) * tc.pixel
			ra, dec := sinInverse(x, y, ra0, dec0)
			wra, wdec := ra*180/math.Pi, dec*180/math.Pi
			gra, gdec := got.World[k][0], got.World[k][1]
			// 1e-9 of a pixel, or 1e-12 deg for float rounding.
			tol := math.Max(1e-9*deg, 1e-12)
			if math.Abs(gra-wra) > tol || math.Abs(gdec-wdec) > tol {
				t.Errorf("pixel %v: astropy (%.12f, %.12f) deg, conventions (%.12f, %.12f)", p, gra, gdec, wra, wdec)
			}
		}
		// East to the left: RA grows towards lower ix (pixel 1 is (0,0),
		// pixel 2 is (nx-1, 0)); north up: Dec grows with iy.
		if !(got.World[1][0] > got.World[2][0]) || !(got.World[3][1] > got.World[1][1]) {
			t.Errorf("orientation: world %v", got.World)
		}
		if got.World[0][0] != im.RA && math.Abs(got.World[0][0]-im.RA) > 1e-12 || math.Abs(got.World[0][1]-im.Dec) > 1e-12 {
			t.Errorf("reference pixel (n/2, n/2) at %v, want (%v, %v)", got.World[0], im.RA, im.Dec)
		}
	}
}

// TestReadAstropyImages reads images written by astropy with a CD matrix
// and with CDELT in arcsec, east to the right and scaled integers.
func TestReadAstropyImages(t *testing.T) {
	t.Run("cd-matrix", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "cd.fits")
		var w struct {
			NX, NY   int
			PixelDeg float64 `json:"pixel_deg"`
			RA, Dec  float64
			Data     []float64
		}
		if err := json.Unmarshal(fitstest.RunPython(t, script, "write-cd", path), &w); err != nil {
			t.Fatal(err)
		}
		im, err := ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if im.NX != w.NX || im.NY != w.NY || !im.HasRADec || im.RA != w.RA || im.Dec != w.Dec || im.BUnit != "Jy/pixel" {
			t.Errorf("image %d×%d RA %v Dec %v BUNIT %q", im.NX, im.NY, im.RA, im.Dec, im.BUnit)
		}
		if want := w.PixelDeg * math.Pi / 180; math.Abs(im.Pixel-want) > 1e-15*want {
			t.Errorf("pixel %g rad, want %g", im.Pixel, want)
		}
		if !reflect.DeepEqual(im.Data, w.Data) {
			t.Errorf("data %v, want %v", im.Data, w.Data)
		}
		if len(im.Cards) == 0 || im.Cards[len(im.Cards)-1].Value != "astropy CD matrix image" {
			t.Errorf("cards %+v", im.Cards)
		}
	})
	t.Run("arcsec-east-right", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "arcsec.fits")
		var w struct {
			NX, NY      int
			PixelArcsec float64 `json:"pixel_arcsec"`
			Data        []float64
		}
		if err := json.Unmarshal(fitstest.RunPython(t, script, "write-arcsec", path), &w); err != nil {
			t.Fatal(err)
		}
		im, err := ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if want := w.PixelArcsec * math.Pi / (180 * 3600); math.Abs(im.Pixel-want) > 1e-15*want {
			t.Errorf("pixel %g rad, want %g", im.Pixel, want)
		}
		if im.HasRADec {
			t.Error("HasRADec without CRVAL")
		}
		// East was to the right, so each row comes back mirrored.
		for iy := 0; iy < w.NY; iy++ {
			for ix := 0; ix < w.NX; ix++ {
				if got, want := im.Data[iy*w.NX+ix], w.Data[iy*w.NX+(w.NX-1-ix)]; got != want {
					t.Errorf("pixel (%d,%d) = %v, want %v", ix, iy, got, want)
				}
			}
		}
	})
}

func TestDecodeErrors(t *testing.T) {
	good := new(bytes.Buffer)
	if err := Encode(good, testImage(4, 4, 0)); err != nil {
		t.Fatal(err)
	}
	replace := func(old, new string) []byte {
		pad := func(s string) string { return s + strings.Repeat(" ", 80-len(s)) }
		return bytes.Replace(good.Bytes(), []byte(pad(old)), []byte(pad(new)), 1)
	}
	card := func(key string) string {
		b := good.Bytes()
		for i := 0; i < 2880*2; i += 80 {
			if strings.HasPrefix(string(b[i:i+8]), key+" ") || string(b[i:i+8]) == key {
				return strings.TrimRight(string(b[i:i+80]), " ")
			}
		}
		t.Fatalf("no %s card", key)
		return ""
	}
	for _, tc := range []struct {
		data []byte
		want string
	}{
		{nil, "empty file"},
		{replace(card("CTYPE1"), "CTYPE1  = 'GLON-SIN'"), "CTYPE1 = 'GLON-SIN'; expected a RA--... axis"},
		{replace(card("CUNIT1"), "CUNIT1  = 'm'"), "CUNIT 'm' is not an angle unit"},
		{replace(card("CDELT2"), "CDELT2  = 1.0"), "pixels are not square"},
		{replace(card("CUNIT2"), "PC1_2   = 0.5"), "the image is rotated"},
		{replace(card("CDELT1"), "CDELT1  = 0.0"), "pixels are not square"},
	} {
		_, err := Decode(tc.data)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("err = %v, want it to contain %q", err, tc.want)
		}
	}
}

// A string card too long for one card is written with the long-string convention
// (FITS standard 4.0, sect. 4.2.1.2), passes fitsverify, reads back whole, and a file
// read and written again is the same, byte for byte.
func TestLongStringCard(t *testing.T) {
	text := strings.Repeat("a warning that goes on and on; ", 8)
	im := testImage(6, 6, 0)
	im.Cards = append(im.Cards, Card{Key: "WARN1", Value: text, Comment: "long"})
	dir := t.TempDir()
	first := filepath.Join(dir, "a.fits")
	if err := WriteFile(first, im); err != nil {
		t.Fatal(err)
	}
	fitstest.Verify(t, first)
	got, err := ReadFile(first)
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, c := range got.Cards {
		if c.Key == "WARN1" {
			found = true
			if c.Value != strings.TrimRight(text, " ") || c.Comment != "long" {
				t.Errorf("WARN1 read back as %q / %q", c.Value, c.Comment)
			}
		}
	}
	if !found {
		t.Fatal("WARN1 not read back")
	}
	second := filepath.Join(dir, "b.fits")
	if err := WriteFile(second, got); err != nil {
		t.Fatal(err)
	}
	a, _ := os.ReadFile(first)
	b, _ := os.ReadFile(second)
	if !bytes.Equal(a, b) {
		t.Error("the file read and written again differs")
	}
}
