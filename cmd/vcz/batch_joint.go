package main

import (
	"fmt"
	"io"
	"path/filepath"
	"time"

	"vcz/recon"
	"vcz/workflow"
)

// runJoint reconstructs all epochs together from their independent images
// (workflow.Batch.Joint), showing its progress on stderr unless quiet, and draws the joint
// montage. It returns the quality verdict of the joint run, for the caller to print after
// the epochs' warnings.
func runJoint(b *workflow.Batch, epochs []*workflow.Epoch, results []workflow.EpochResult, lambda float64, stdout, stderr io.Writer, quiet bool) ([]string, error) {
	out := b.Out
	tty := isTerminal(stderr)
	var last time.Time
	res, err := b.Joint(epochs, results, workflow.JointSettings{Lambda: lambda,
		Progress: func(pr recon.Progress) bool {
			if quiet {
				return true
			}
			it := pr.Iter
			text := fmt.Sprintf("joint: %s iter %4d  objective %.6g", pr.Stage, it, pr.Objective)
			if tty {
				if time.Since(last) > 100*time.Millisecond {
					fmt.Fprintf(stderr, "\r\033[K%s", clip(text, terminalWidth(stderr)))
					last = time.Now()
				}
			} else if it%50 == 0 {
				fmt.Fprintln(stderr, text)
			}
			return true
		}})
	if tty && !quiet {
		fmt.Fprint(stderr, "\r\033[K")
	}
	if err != nil {
		// An *InputError (an epoch's data no longer read) exits 2, any other error 1.
		return nil, err
	}
	if err := b.WriteJointMontage(results, res); err != nil && !quiet {
		fmt.Fprintf(stderr, "note: joint montage: %v\n", err)
	}
	fmt.Fprintf(stdout, "Joint: temporal weight %.4g, χ²ᵣ %.4g over all epochs, %d iterations; wrote %s\n",
		res.Lambda, res.Chi2rAll, res.Iter, filepath.Join(out, "joint.fits"))
	return res.Warnings, nil
}
