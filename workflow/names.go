package workflow

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"unicode"

	"vcz/output"
	"vcz/recon/batch"
)

// CheckEpochName refuses an epoch name that cannot be the stem of a file in the output
// folder: empty, "." or "..", or holding a path separator or a control character. Names
// read from a summary file (batch -collect) pass here before any path is built from them.
func CheckEpochName(name string) error {
	switch {
	case name == "":
		return fmt.Errorf("an epoch name is empty")
	case name == "." || name == "..":
		return fmt.Errorf("epoch name %q is not a file name", name)
	case strings.ContainsAny(name, `/\`):
		return fmt.Errorf("epoch name %q must not contain a path separator", name)
	case strings.IndexFunc(name, unicode.IsControl) >= 0:
		return fmt.Errorf("epoch name %q must not contain control characters", name)
	}
	return nil
}

// The files of a batch in its output folder, named here alone so that the writers, the
// readers of an earlier run and the collision check (CheckEpochNames) agree.
const (
	extFITS   = ".fits"
	extPNG    = ".png"
	extStatus = ".status.json"
	// jointSuffix marks the files of the joint reconstruction: EPOCH-joint.fits,
	// montage-joint.png, epochs-joint.gif.
	jointSuffix = "-joint"
	// jointCube is the cube of the joint reconstruction.
	jointCube = "joint.fits"
	// summaryName is the stem of the summary of a whole batch (summary.json, summary.csv).
	summaryName = "summary"
	// shardSummaries matches the summaries of the shards (shardSummary).
	shardSummaries = "summary-*-of-*.json"
)

// epochFile is the file of the epoch name with extension ext (extFITS, extPNG, extStatus)
// in dir; suffix is "" or jointSuffix.
func epochFile(dir, name, suffix, ext string) string {
	return filepath.Join(dir, name+suffix+ext)
}

// shardSummary is the stem of the summary of shard K of N.
func shardSummary(sh batch.Shard) string { return fmt.Sprintf("summary-%d-of-%d", sh.K, sh.N) }

// montageFile and animationFile are the montage and the animation of the epochs in dir;
// suffix is "" or jointSuffix.
func montageFile(dir, suffix string) string   { return filepath.Join(dir, "montage"+suffix+extPNG) }
func animationFile(dir, suffix string) string { return filepath.Join(dir, "epochs"+suffix+".gif") }

// outputNames returns the files a batch writes for an epoch named name, for joint or not.
func outputNames(name string, joint bool) []string {
	n := []string{name + extFITS, name + extPNG, name + extStatus}
	if joint {
		n = append(n, name+jointSuffix+extFITS, name+jointSuffix+extPNG)
	}
	return n
}

// batchProducts are the files a batch writes for all its epochs.
func batchProducts(joint bool) []string {
	p := []string{summaryName + ".json", summaryName + ".csv", filepath.Base(montageFile("", "")), filepath.Base(animationFile("", ""))}
	if joint {
		p = append(p, jointCube, filepath.Base(montageFile("", jointSuffix)), filepath.Base(animationFile("", jointSuffix)))
	}
	return p
}

// CheckEpochNames refuses, before any work, epochs whose output files would collide with
// each other's or with the batch's own (an epoch "montage" would write montage.png; with
// -joint, epochs "a" and "a-joint" would both write a-joint.fits). Errors are *InputError
// naming both owners.
func CheckEpochNames(epochs []*Epoch, joint bool) error {
	owner := map[string]string{}
	for _, p := range batchProducts(joint) {
		owner[p] = "the batch's own " + p
	}
	for _, e := range epochs {
		if err := CheckEpochName(e.Name); err != nil {
			return inputErrorf("batch: %v", err)
		}
		for _, f := range outputNames(e.Name, joint) {
			key := strings.ToLower(f) // case-insensitive file systems fold these together
			if prev, dup := owner[key]; dup {
				return inputErrorf("batch: epoch %q would write %s, as %s does; rename the epoch", e.Name, f, prev)
			}
			owner[key] = fmt.Sprintf("epoch %q", e.Name)
		}
	}
	return nil
}

// checkCollected refuses a collected summary whose rows name files outside the folder:
// every epoch name passes CheckEpochName and its FITS and PNG are its own name's.
func checkCollected(s *batch.Summary) error {
	for _, r := range s.Rows {
		if err := CheckEpochName(r.Epoch); err != nil {
			return err
		}
		if r.FITS != "" && r.FITS != r.Epoch+extFITS || r.PNG != "" && r.PNG != r.Epoch+extPNG {
			return fmt.Errorf("epoch %q names files %q and %q, not its own", r.Epoch, r.FITS, r.PNG)
		}
	}
	return nil
}

// CheckEpochFiles refuses, before any work, an epoch whose data file is missing or is not a
// regular file: that is bad input (exit 2), not an epoch that failed in its computation.
func CheckEpochFiles(epochs []*Epoch) error {
	for _, e := range epochs {
		for _, f := range e.Files {
			st, err := os.Stat(f)
			switch {
			case errors.Is(err, fs.ErrNotExist):
				return inputError(f, fmt.Errorf("%s: no such file (epoch %q)", f, e.Name))
			case err != nil:
				return inputError(f, fmt.Errorf("%s: %v (epoch %q)", f, err, e.Name))
			case !st.Mode().IsRegular():
				return inputError(f, fmt.Errorf("%s: not a regular file (epoch %q)", f, e.Name))
			}
		}
	}
	return nil
}

// DefaultOutput is the output a command names from its first input: the input's base name
// without its extension, followed by suffix, in the current folder ("night1.oifits" and
// "-image.fits" give "night1-image.fits").
func DefaultOutput(input, suffix string) string {
	base := filepath.Base(input)
	return strings.TrimSuffix(base, filepath.Ext(base)) + suffix
}

// CheckImageOutput refuses, before any work, an image path out of 'vcz image' that is not a
// FITS name, that cannot be written, or that (with the bootstrap's maps beside it when
// bootstrap) would overwrite one of the inputs. Errors are *InputError.
func CheckImageOutput(out string, inputs []string, bootstrap bool) error {
	if err := CheckOutputs(out); err != nil {
		return err
	}
	outs := []string{out}
	if bootstrap {
		outs = append(outs, BootstrapOutputs(out)...)
	}
	if err := CheckNotInputs(inputs, outs...); err != nil {
		return err
	}
	if output.Stem(out) == out {
		// The image is FITS; its preview and plots are named from the FITS path. A name
		// like star.png used to receive FITS bytes, with the preview in star.png.png.
		return inputErrorf("image: -o %s: the image is written as FITS: give a name ending in .fits (the PNG preview and plots go beside it)", out)
	}
	return nil
}
