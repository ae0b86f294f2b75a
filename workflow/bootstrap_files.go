package workflow

import (
	"fmt"
	"os"

	"vcz/io/fitsimage"
)

// ReplicateFiles keeps bootstrap replicates as FITS images beside an output, STEM-boot-0001.fits
// for the first, each with the hash of its run (BOOTHASH): the data files' contents and
// every setting of the image and of the bootstrap. A file of another run, or one that
// does not read back, is not loaded, and is replaced when the replicate is saved again.
// The tasks of a job array share the folder, each writing its own replicates.
type ReplicateFiles struct {
	Stem  string  // the output path without its extension (output.Stem)
	Hash  string  // of the run (recon/batch.Hash of the settings and the data files)
	N     int     // pixels per side
	Pixel float64 // rad
}

// Path returns the file of replicate k (0-based).
func (r ReplicateFiles) Path(k int) string { return fmt.Sprintf("%s-boot-%04d.fits", r.Stem, k+1) }

// Load reads replicate k when its file belongs to this run.
func (r ReplicateFiles) Load(k int) (Replicate, bool) {
	p := r.Path(k)
	if _, err := os.Stat(p); err != nil {
		return Replicate{}, false
	}
	im, err := fitsimage.ReadFile(p)
	if err != nil || im.NX != r.N || im.NY != r.N || im.Planes > 1 {
		return Replicate{}, false
	}
	var rep Replicate
	hash := false
	for _, c := range im.Cards {
		switch c.Key {
		case "BOOTHASH":
			hash = c.Value == r.Hash
		case "NITER":
			if v, ok := c.Value.(int); ok {
				rep.Iter = v
			}
		case "CONVERG":
			rep.Converged, _ = c.Value.(bool)
		}
	}
	if !hash {
		return Replicate{}, false
	}
	rep.Image = im.Data
	return rep, true
}

// Save writes replicate k, atomically.
func (r ReplicateFiles) Save(k int, rep Replicate) error {
	return fitsimage.WriteFile(r.Path(k), &fitsimage.Image{NX: r.N, NY: r.N, Pixel: r.Pixel, Data: rep.Image, Cards: []fitsimage.Card{
		{Key: "BOOTREP", Value: k + 1, Comment: "bootstrap replicate"},
		{Key: "BOOTHASH", Value: r.Hash, Comment: "hash of the data files and settings"},
		{Key: "NITER", Value: rep.Iter, Comment: "iterations of the final run"},
		{Key: "CONVERG", Value: rep.Converged, Comment: "the final run converged"},
		{Key: "COMMENT", Value: "one image of a bootstrap, before alignment; vcz image -bootstrap-collect"},
		{Key: "COMMENT", Value: "merges the replicates into the maps"},
	}})
}
