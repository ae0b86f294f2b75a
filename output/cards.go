package output

import (
	"encoding/json"
	"fmt"
	"path/filepath"
	"strings"
	"time"

	"vcz/dataset"
	"vcz/io/fitsimage"
	"vcz/io/oifits"
	"vcz/recon"
	"vcz/runspec"
)

// Creator is the value of the CREATOR card of every image vcz writes.
const Creator = "vcz " + Version

// FITSCards is the provenance of r as FITS header cards, in the order of the package doc.
// DATE is r.Date, or the time of the call when r.Date is zero (UTC).
func FITSCards(r Run) []fitsimage.Card {
	res := r.Result
	date := r.Date
	if date.IsZero() {
		date = time.Now()
	}
	c := []fitsimage.Card{
		{Key: "OBJECT", Value: orUnknown(r.Target()), Comment: "target"},
		{Key: "DATE", Value: date.UTC().Format("2006-01-02T15:04:05"), Comment: "file creation date (UTC)"},
		{Key: "CREATOR", Value: Creator, Comment: "software that made this image"},
		{Key: "PENALTY", Value: r.Regularizer(), Comment: "regularizer(s) of the image"},
		{Key: "PENWT", Value: res.Weight, Comment: "weight of the regularizer (mu)"},
		{Key: "PENVAL", Value: res.Reg, Comment: "regularizer value R(x)"},
		{Key: "WTAUTO", Value: len(res.Path) > 0, Comment: "weight chosen from the data (chi2r aim)"},
		{Key: "CHI2R", Value: res.Chi2r, Comment: "reduced chi2 of all fitted data"},
		{Key: "CHI2EXP", Value: res.Chi2rTarget, Comment: "expected reduced chi2 (target of the weight)"},
	}
	for _, t := range res.Chi2 {
		key := t.Type.Info().Key
		c = append(c, fitsimage.Card{Key: "CHI2" + key, Value: t.Chi2r, Comment: fmt.Sprintf("reduced chi2 of %s (%d points)", t.Type, t.N)})
		c = append(c, fitsimage.Card{Key: "NPT" + key, Value: t.N, Comment: fmt.Sprintf("number of %s points fitted", t.Type)})
	}
	c = append(c,
		fitsimage.Card{Key: "NITER", Value: res.Iter, Comment: "iterations of the final run"},
		fitsimage.Card{Key: "NITERTOT", Value: res.TotalIter, Comment: "iterations of all runs"},
		fitsimage.Card{Key: "STOPWHY", Value: res.StopReason, Comment: "why the final run stopped"},
		fitsimage.Card{Key: "SEED", Value: int(r.Spec.SeedValue()), Comment: "seed of the random choices"},
		fitsimage.Card{Key: "GRIDN", Value: res.Grid.N, Comment: "pixels per side"},
		fitsimage.Card{Key: "PIXMAS", Value: res.Grid.Pixel / recon.Mas, Comment: "pixel size (mas)"},
		fitsimage.Card{Key: "RESOLMAS", Value: res.Grid.Resolution / recon.Mas, Comment: "nominal resolution lambda_min/(2 B_max) (mas)"},
	)
	c = append(c, observationCards(r.Files, r.Data)...)
	c = append(c, WarningCards(res.Warnings)...)
	c = append(c, historyCards(r.Files, r.Data, r.Spec, res.Grid.Reasons, "weight path", res.Path, res.Notices)...)
	return finishCards(c, "One image consistent with the data, not a photograph: features smaller",
		"than the resolution lambda/(2 B_max) are not constrained by the data.")
}

// historyCards are the HISTORY cards of a result: its data files by the paths given, its
// options (runspec.Spec.String) and with them RUNSPEC and DPATHn (rerunCards), the reasons
// of the grid choice, the steps of a weight search (labelled label) and the notices.
func historyCards(files []*oifits.File, d *dataset.Data, spec runspec.Spec, reasons []string, label string, path []recon.WeightStep, notices []string) []fitsimage.Card {
	var c []fitsimage.Card
	for i, f := range d.Files {
		path := filepath.Base(f)
		if i < len(files) && files[i].Path != "" {
			path = files[i].Path // as the user gave it, for -rerun
		}
		c = append(c, fitsimage.Card{Key: "HISTORY", Value: fmt.Sprintf("data file %d: %s", i+1, path)})
	}
	var lines []string
	for _, line := range strings.Split(strings.TrimSuffix(spec.String(), "\n"), "\n") {
		if line != "" {
			lines = append(lines, line)
			c = append(c, fitsimage.Card{Key: "HISTORY", Value: "option: " + line})
		}
	}
	c = append(c, rerunCards(files, lines)...)
	for _, g := range reasons {
		c = append(c, fitsimage.Card{Key: "HISTORY", Value: "grid: " + g})
	}
	for _, s := range path {
		c = append(c, fitsimage.Card{Key: "HISTORY", Value: fmt.Sprintf("%s: weight=%.6g chi2r=%.6g R=%.6g iter=%d%s", label, s.Weight, s.Chi2r, s.Reg, s.Iter, stepFlags(s))})
	}
	for _, n := range notices {
		c = append(c, fitsimage.Card{Key: "HISTORY", Value: "note: " + n})
	}
	return c
}

// finishCards turns the text of c into printable ASCII (FITS standard 4.0, sect. 4.1.2.1)
// and appends the closing COMMENT lines.
func finishCards(c []fitsimage.Card, comments ...string) []fitsimage.Card {
	for i := range c {
		if v, ok := c[i].Value.(string); ok {
			c[i].Value = ASCII(v)
		}
		c[i].Comment = ASCII(c[i].Comment)
	}
	for _, t := range comments {
		c = append(c, fitsimage.Card{Key: "COMMENT", Value: t})
	}
	return c
}

// RunSpecKey and DataPathKey name the cards that let a result be made again (vcz image
// -rerun): RUNSPEC holds the canonical run specification (runspec.Spec.String) as a JSON
// array of its "name=value" lines, and DPATH1, DPATH2, ... the data files by the paths the
// user gave; DSHA1, DSHA2, ... (observationCards) their SHA-256.
const (
	RunSpecKey  = "RUNSPEC"
	DataPathKey = "DPATH"
	DataHashKey = "DSHA"
)

// rerunCards are RUNSPEC and the DPATHn of the files read from disk.
func rerunCards(files []*oifits.File, lines []string) []fitsimage.Card {
	if lines == nil {
		lines = []string{}
	}
	b, _ := json.Marshal(lines)
	c := []fitsimage.Card{{Key: RunSpecKey, Value: string(b), Comment: "run options (JSON), for vcz image -rerun"}}
	for i, f := range files {
		if f.Path != "" {
			c = append(c, fitsimage.Card{Key: fmt.Sprintf("%s%d", DataPathKey, i+1), Value: f.Path, Comment: fmt.Sprintf("data file %d as given", i+1)})
		}
	}
	return c
}

// mjdUnix is the MJD of 1970-01-01T00:00:00 UTC.
const mjdUnix = 40587

// observationCards describe the data behind r: the dates of the first and last
// observation (DATE-OBS, DATE-END, MJD-OBS, MJD-END, FITS standard 4.0 sect. 9.4), the wavelengths
// used (WAVEMIN, WAVEMAX in metres), the instrument set-ups (INSTRUME, their INSNAMEs) and
// the arrays (TELESCOP, their ARRNAMEs), and the SHA-256 of each data file read from disk
// (DSHAn, FIPS 180-4).
func observationCards(files []*oifits.File, d *dataset.Data) []fitsimage.Card {
	var c []fitsimage.Card
	s := d.Summarize()
	if s.MJDMax > 0 {
		iso := func(mjd float64) string {
			return time.Unix(0, 0).UTC().Add(time.Duration((mjd - mjdUnix) * 86400 * float64(time.Second))).Format("2006-01-02T15:04:05")
		}
		c = append(c,
			fitsimage.Card{Key: "DATE-OBS", Value: iso(s.MJDMin), Comment: "first observation (UTC)"},
			fitsimage.Card{Key: "DATE-END", Value: iso(s.MJDMax), Comment: "last observation (UTC)"},
			fitsimage.Card{Key: "MJD-OBS", Value: s.MJDMin, Comment: "[d] MJD of the first observation"},
			fitsimage.Card{Key: "MJD-END", Value: s.MJDMax, Comment: "[d] MJD of the last observation"})
	}
	if s.LambdaMax > 0 {
		c = append(c,
			fitsimage.Card{Key: "WAVEMIN", Value: s.LambdaMin, Comment: "[m] shortest wavelength fitted"},
			fitsimage.Card{Key: "WAVEMAX", Value: s.LambdaMax, Comment: "[m] longest wavelength fitted"})
	}
	var ins []string
	for _, in := range d.Instruments {
		ins = append(ins, in.Name)
	}
	if len(ins) > 0 {
		c = append(c, fitsimage.Card{Key: "INSTRUME", Value: strings.Join(ins, ","), Comment: "instrument set-ups (INSNAME)"})
	}
	var arrays []string
	seen := map[string]bool{}
	for _, f := range files {
		for _, a := range f.Arrays {
			if !seen[a.Name] {
				seen[a.Name] = true
				arrays = append(arrays, a.Name)
			}
		}
	}
	if len(arrays) > 0 {
		c = append(c, fitsimage.Card{Key: "TELESCOP", Value: strings.Join(arrays, ","), Comment: "arrays (ARRNAME)"})
	}
	for i, f := range files {
		if f.SHA256 != "" {
			c = append(c, fitsimage.Card{Key: fmt.Sprintf("%s%d", DataHashKey, i+1), Value: f.SHA256, Comment: fmt.Sprintf("SHA-256 of data file %d", i+1)})
		}
	}
	return c
}

// WarningCards are the FITS header cards of the quality verdict (recon.Result.Warnings):
// NWARN, the number of warnings (also when 0), and WARN1, WARN2, ... with each warning's
// full text on one line, in printable ASCII and continued on CONTINUE cards when longer than
// one card (long-string convention, FITS standard 4.0 sect. 4.2.1.2).
func WarningCards(warnings []string) []fitsimage.Card {
	c := []fitsimage.Card{{Key: "NWARN", Value: len(warnings), Comment: "quality warnings of the reconstruction (WARNn)"}}
	for i, s := range warnings {
		c = append(c, fitsimage.Card{Key: fmt.Sprintf("WARN%d", i+1), Value: ASCII(OneLine(s)), Comment: "quality warning"})
	}
	return c
}

// OneLine joins the lines of a message with "; ".
func OneLine(s string) string {
	return strings.ReplaceAll(strings.TrimSpace(s), "\n", "; ")
}

func orUnknown(s string) string {
	if s == "" {
		return "UNKNOWN"
	}
	return s
}

// stepFlags says how a run of the weight search ended, for the HISTORY cards.
func stepFlags(s recon.WeightStep) string {
	switch {
	case s.Stalled:
		return " stalled"
	case s.Converged:
		return " converged"
	}
	return ""
}

// Truncate shortens s to at most n bytes, for FITS string values.
func Truncate(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return s[:n]
}

// ASCII replaces the non-ASCII characters of the project's messages by ASCII spellings,
// since FITS header text is printable ASCII only (FITS standard 4.0, sect. 4.1.2.1);
// anything else becomes '?'.
func ASCII(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch {
		case r >= 0x20 && r < 0x7f:
			b.WriteRune(r)
		case r == '×':
			b.WriteString("x")
		case r == '·':
			b.WriteString("*")
		case r == 'λ':
			b.WriteString("lambda")
		case r == 'μ':
			b.WriteString("mu")
		case r == 'χ':
			b.WriteString("chi")
		case r == '²':
			b.WriteString("2")
		case r == 'ᵣ':
			b.WriteString("r")
		case r == 'µ':
			b.WriteString("u")
		case r == '–' || r == '—' || r == '−':
			b.WriteString("-")
		case r == '≤':
			b.WriteString("<=")
		case r == '≥':
			b.WriteString(">=")
		case r == '≈':
			b.WriteString("~")
		case r == '°':
			b.WriteString(" deg")
		default:
			b.WriteByte('?')
		}
	}
	return b.String()
}

// WriteModel writes a model image (normalised, n×n pixels of pixel rad) with the world
// coordinates of the reconstructions of target in files, so that truth and
// reconstruction compare pixel by pixel; what goes into a HISTORY card.
func WriteModel(path string, img []float64, n int, pixel float64, files []*oifits.File, target, what string) error {
	ra, dec, ok := TargetCoords(files, target)
	im := &fitsimage.Image{NX: n, NY: n, Pixel: pixel, Data: img, RA: ra, Dec: dec, HasRADec: ok, BUnit: BUnit, Normalized: true,
		Cards: []fitsimage.Card{
			{Key: "OBJECT", Value: orUnknown(target), Comment: "target"},
			{Key: "CREATOR", Value: Creator, Comment: "software that made this image"},
			{Key: "HISTORY", Value: ASCII(what)},
		}}
	return fitsimage.WriteFile(path, im)
}
