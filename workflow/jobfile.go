package workflow

import (
	"errors"
	"fmt"
	"io/fs"
	"maps"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"vcz/io/oifits"
	"vcz/io/preview"
	"vcz/io/safefile"
	"vcz/recon/batch"
	"vcz/recon/model"
	"vcz/runspec"
)

// Epoch is one epoch of a batch: its data files and the options of its image.
type Epoch struct {
	Index int    // 0-based position in the full list of epochs
	Name  string // used for the output names
	Files []string
	Spec  runspec.Spec
	// MJDMin and MJDMax are the range of the split, or of the data once read; 0 when
	// unknown.
	MJDMin, MJDMax float64
}

// SettingsText is the text hashed with an epoch's files (batch.Hash): the canonical text
// of its options, which leaves out the worker count (the image does not depend on it).
func (e *Epoch) SettingsText() string {
	return "vcz batch v2\n" + e.Spec.String()
}

// SplitEpochs splits the observations of files into epochs at gaps in MJD longer than gap
// days (batch.Clusters), each with the options shared and, unless shared selects a date
// range, the selection of its own rows. A file that cannot be read becomes an epoch of its
// own, placed last, that fails with the reader's message when run. Epochs are named
// epoch-NN-DATE (epoch-NN-FILE for an unreadable file).
func SplitEpochs(files []string, shared runspec.Spec, gap float64) []*Epoch {
	type span struct {
		mjd []float64
		err error
	}
	spans := make([]span, len(files))
	var all []float64
	for i, p := range files {
		f, err := oifits.ReadFile(p)
		if err != nil {
			spans[i].err = err
			continue
		}
		spans[i].mjd = fileMJDs(f)
		all = append(all, spans[i].mjd...)
	}
	var epochs []*Epoch
	for _, r := range batch.Clusters(all, gap) {
		e := &Epoch{Spec: shared, MJDMin: r.Min, MJDMax: r.Max}
		for i, s := range spans {
			for _, m := range s.mjd {
				if m >= r.Min && m <= r.Max {
					e.Files = append(e.Files, files[i])
					break
				}
			}
		}
		// Select the epoch's rows of files that span several epochs; the margin keeps rows
		// at the ends whatever the rounding of the MJD column.
		if e.Spec.MJDMin == 0 && e.Spec.MJDMax == 0 {
			e.Spec.MJDMin, e.Spec.MJDMax = roundMJD(r.Min-1e-5), roundMJD(r.Max+1e-5)
		}
		epochs = append(epochs, e)
	}
	for i, s := range spans {
		if s.err != nil {
			epochs = append(epochs, &Epoch{Spec: shared, Files: []string{files[i]}, MJDMin: math.Inf(1), MJDMax: math.Inf(1)})
		}
	}
	sort.SliceStable(epochs, func(a, b int) bool { return epochs[a].MJDMin < epochs[b].MJDMin })
	for i, e := range epochs {
		e.Index = i
		if math.IsInf(e.MJDMin, 0) {
			e.MJDMin, e.MJDMax = 0, 0 // unknown
			base := filepath.Base(e.Files[0])
			e.Name = fmt.Sprintf("epoch-%02d-%s", i+1, strings.TrimSuffix(base, filepath.Ext(base)))
		} else {
			e.Name = fmt.Sprintf("epoch-%02d-%s", i+1, preview.FormatMJD(e.MJDMin))
		}
	}
	return epochs
}

// fileMJDs returns the MJD of every data row of f.
func fileMJDs(f *oifits.File) []float64 {
	var m []float64
	for _, t := range f.Vis2 {
		for _, r := range t.Rows {
			m = append(m, r.MJD)
		}
	}
	for _, t := range f.T3 {
		for _, r := range t.Rows {
			m = append(m, r.MJD)
		}
	}
	for _, t := range f.Vis {
		for _, r := range t.Rows {
			m = append(m, r.MJD)
		}
	}
	return m
}

// roundMJD rounds an MJD to 6 decimals (0.09 s), as the epochs' selections are written.
func roundMJD(m float64) float64 {
	r, _ := strconv.ParseFloat(strconv.FormatFloat(m, 'f', 6, 64), 64)
	return r
}

// jobFile is a job file. The option tables [image] and [[epoch]] are decoded as TOML
// tables whose keys are the flag names (runspec.Spec.SetTable); an epoch also has its name
// and files.
type jobFile struct {
	Output string           `toml:"output"`
	Image  map[string]any   `toml:"image"`
	Epoch  []map[string]any `toml:"epoch"`
}

// renamedKeys are the job-file keys of earlier versions, which named some options
// differently from their flags, with a hint for the message of an unknown key.
var renamedKeys = map[string]string{
	"regularizer": "reg", "grid": "n", "iterations": "iter", "tv_eps": "tv-eps",
	"data_weights": "data-weights", "instruments": "ins",
	"amplitudes_first": "no-amp-first (true skips the first pass on amplitudes)",
}

// ReadJobFile reads a job file (TOML: output, [image] and [[epoch]] tables whose keys are
// the flag names of `vcz image`); the options of each epoch start from shared, then
// [image], then the epoch's own keys. It returns the epochs and the output folder the file
// names ("" for none), relative paths taken from the file's folder. Errors are
// *InputError naming the file, and for an unknown key its line.
func ReadJobFile(path string, shared runspec.Spec) ([]*Epoch, string, error) {
	src, err := safefile.ReadFile(path)
	if err != nil {
		// "job.toml: no such file or directory", as the data files' errors read.
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = fmt.Errorf("%s: %w", path, pe.Err)
		}
		return nil, "", inputError(path, err)
	}
	return parseJobFile(src, path, shared)
}

// parseJobFile is ReadJobFile on the content src of the file at path.
func parseJobFile(src []byte, path string, shared runspec.Spec) ([]*Epoch, string, error) {
	bad := func(format string, args ...any) error { return inputError(path, fmt.Errorf(format, args...)) }
	var jf jobFile
	md, err := toml.Decode(string(src), &jf)
	if err != nil {
		return nil, "", bad("%s: %v", path, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := und[0]
		return nil, "", bad("%s:%d: unknown key %s (see 'vcz batch --help')", path, model.KeyLine(src, k, -1), k.String())
	}
	// optionErr reports a bad key of the table (image, or the index-th epoch) as the
	// others: an unknown key with its line, a bad value after where.
	optionErr := func(err error, table string, index int, where string) error {
		var oe *runspec.OptionError
		if errors.As(err, &oe) && errors.Is(err, runspec.ErrUnknownOption) {
			hint := ""
			if h, ok := renamedKeys[oe.Option]; ok {
				hint = "; job keys are the flag names: " + h
			}
			return bad("%s:%d: unknown key %s.%s (see 'vcz batch --help'%s)", path, model.KeyLine(src, toml.Key{table, oe.Option}, index), table, oe.Option, hint)
		}
		return bad("%s: %s %v", path, where, err)
	}
	if err := shared.SetTable(jf.Image, runspec.Select|runspec.Types|runspec.Recon|runspec.Cube); err != nil {
		return nil, "", optionErr(err, "image", -1, "[image]")
	}
	if len(jf.Epoch) == 0 {
		return nil, "", bad("%s: no [[epoch]] listed", path)
	}
	dir := filepath.Dir(path)
	seen := map[string]bool{}
	var epochs []*Epoch
	for i, tbl := range jf.Epoch {
		opts := maps.Clone(tbl)
		delete(opts, "name")
		delete(opts, "files")
		name := ""
		if v, ok := tbl["name"]; ok {
			if name, ok = v.(string); !ok {
				return nil, "", bad("%s: epoch %d: name %v: want a string", path, i+1, v)
			}
		}
		e := &Epoch{Index: i, Name: strings.TrimSpace(name), Spec: shared}
		if e.Name == "" {
			e.Name = fmt.Sprintf("epoch-%02d", i+1)
		}
		if err := CheckEpochName(e.Name); err != nil {
			return nil, "", bad("%s: epoch %d: %v", path, i+1, err)
		}
		if seen[e.Name] {
			return nil, "", bad("%s: epoch %d: name %q is used twice", path, i+1, e.Name)
		}
		seen[e.Name] = true
		// The options first, so that a misspelt key (fils = [...]) is named as unknown
		// rather than reported as an epoch without files.
		if err := e.Spec.SetTable(opts, runspec.Select|runspec.Types|runspec.Recon|runspec.Cube); err != nil {
			return nil, "", optionErr(err, "epoch", i, fmt.Sprintf("epoch %q:", e.Name))
		}
		v, ok := tbl["files"]
		list, isList := v.([]any)
		switch {
		case !ok:
			return nil, "", bad("%s: epoch %q lists no files (want files = [\"a.oifits\", ...])", path, e.Name)
		case !isList:
			if str, isStr := v.(string); isStr {
				v = strconv.Quote(str)
			}
			return nil, "", bad("%s: epoch %q: files = %v: want a list of file names, e.g. files = [\"a.oifits\"]", path, e.Name, v)
		case len(list) == 0:
			return nil, "", bad("%s: epoch %q lists no files", path, e.Name)
		}
		for _, v := range list {
			p, ok := v.(string)
			if !ok {
				return nil, "", bad("%s: epoch %q: files: %v is not a file name", path, e.Name, v)
			}
			if !filepath.IsAbs(p) {
				p = filepath.Join(dir, p)
			}
			e.Files = append(e.Files, p)
		}
		epochs = append(epochs, e)
	}
	out := jf.Output
	if out != "" && !filepath.IsAbs(out) {
		out = filepath.Join(dir, out)
	}
	return epochs, out, nil
}

// Epochs lists the epochs of a batch: those of the job file when job is not "", else the
// files split at gaps longer than gap days (SplitEpochs), each with the options shared. It
// returns the output folder the job file names ("" for none). Errors are *InputError.
func Epochs(job string, files []string, shared runspec.Spec, gap float64) ([]*Epoch, string, error) {
	switch {
	case job != "" && len(files) > 0:
		return nil, "", inputErrorf("batch: give either -job or OIFITS files, not both")
	case job != "":
		return ReadJobFile(job, shared)
	case len(files) == 0:
		return nil, "", inputErrorf("batch: no job file or OIFITS file given (run 'vcz batch --help')")
	case !(gap > 0):
		return nil, "", inputErrorf("batch: -gap %g must be positive", gap)
	}
	return SplitEpochs(files, shared, gap), "", nil
}

// ChooseShard reads the shard of a batch from text ("K/N"), or when text is "" from the
// variables of a SLURM job-array task (batch.ShardFromEnv with getenv); with neither it is
// the whole batch. Errors are *InputError.
func ChooseShard(text string, getenv func(string) string) (batch.Shard, error) {
	if text != "" {
		sh, err := batch.ParseShard(text)
		if err != nil {
			return sh, inputErrorf("batch: -shard: %v", err)
		}
		return sh, nil
	}
	sh, ok, err := batch.ShardFromEnv(getenv)
	if err != nil {
		return sh, inputErrorf("batch: %v", err)
	}
	if !ok {
		sh = batch.Shard{K: 1, N: 1}
	}
	return sh, nil
}
