package validate

import (
	"fmt"
	"io"
	"math"
	"sort"
	"strings"
)

// Targets of the engine that the suite checks (the project's goals for a default
// reconstruction): L1 of the default at most MaxRatio times that of the oracle, χ²ᵣ within
// [MinChi2Ratio, MaxChi2Ratio] of its expected value, never mirrored.
const (
	MaxRatio     = 1.25
	MinChi2Ratio = 0.8
	MaxChi2Ratio = 1.25
)

// Failures lists, one phrase each, the targets the row misses; an error is one failure.
// Without an oracle the ratio is not checked.
func (r Row) Failures() []string { return r.failures(MaxRatio) }

// failures is Failures with maxRatio in place of MaxRatio.
func (r Row) failures(maxRatio float64) []string {
	if r.Err != nil {
		return []string{"error: " + r.Err.Error()}
	}
	var f []string
	if r.Oracle != nil && !(r.Ratio() <= maxRatio) {
		f = append(f, fmt.Sprintf("L1 %.3f is %.2f × the oracle's %.3f (want ≤ %.2f)", r.Default.L1, r.Ratio(), r.Oracle.L1, maxRatio))
	}
	if q := r.Default.Chi2r / r.Default.Chi2rTarget; !(q >= MinChi2Ratio && q <= MaxChi2Ratio) {
		f = append(f, fmt.Sprintf("χ²ᵣ %.3f is %.2f × its expected %.3f (want %.2f–%.2f)", r.Default.Chi2r, q, r.Default.Chi2rTarget, MinChi2Ratio, MaxChi2Ratio))
	}
	if r.Default.Mirrored {
		f = append(f, fmt.Sprintf("mirrored (L1 %.3f against the rotated truth, %.3f against the truth)", r.Default.L1Rotated, r.Default.L1))
	}
	return f
}

// WriteMarkdown writes the rows as a Markdown table, one line per case in the given order,
// followed by a summary of the targets met.
func WriteMarkdown(w io.Writer, rows []Row) error {
	var b strings.Builder
	b.WriteString("| scene | family | array | errors | N data | grid | L1 | NCC | χ²ᵣ | expected | weight | time (s) | oracle L1 | oracle weight | ratio | mirrored | warnings |\n")
	b.WriteString("| --- | --- | --- | --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | --- | --- |\n")
	for _, r := range rows {
		if r.Err != nil {
			fmt.Fprintf(&b, "| %s | %s | %s | %s | %d | | | | | | | | | | | | error: %s |\n", r.Scene, r.Family, r.Array, r.Model, r.N, cell(r.Err.Error()))
			continue
		}
		d := r.Default
		ol, ow, ratio := "–", "–", "–"
		if r.Oracle != nil {
			ol, ow, ratio = fmt.Sprintf("%.3f", r.Oracle.L1), fmt.Sprintf("%.3g", r.Oracle.Weight), fmt.Sprintf("%.2f", r.Ratio())
		}
		mir := "no"
		if d.Mirrored {
			mir = "**yes**"
		}
		fmt.Fprintf(&b, "| %s | %s | %s | %s | %d | %d | %.3f | %.4f | %.3f | %.3f | %.3g | %.1f | %s | %s | %s | %s | %s |\n",
			r.Scene, r.Family, r.Array, r.Model, r.N, d.Grid.N, d.L1, d.NCC, d.Chi2r, d.Chi2rTarget, d.Weight, d.Seconds,
			ol, ow, ratio, mir, cell(strings.Join(d.Warnings, " ")))
	}
	b.WriteString("\n")
	b.WriteString(Summary(rows))
	_, err := io.WriteString(w, b.String())
	return err
}

// cell makes text safe inside a Markdown table cell.
func cell(s string) string {
	s = strings.ReplaceAll(s, "|", "\\|")
	return strings.ReplaceAll(s, "\n", " ")
}

// Summary describes in a few lines how many rows meet each target, with medians, overall and
// per array and error model.
func Summary(rows []Row) string {
	var b strings.Builder
	type group struct {
		n, errs, ratioOK, withOracle, chiOK, mirrored int
		ratios, l1s                                   []float64
	}
	groups := map[string]*group{}
	var keys []string
	add := func(key string, r Row) {
		g := groups[key]
		if g == nil {
			g = &group{}
			groups[key] = g
			keys = append(keys, key)
		}
		g.n++
		if r.Err != nil {
			g.errs++
			return
		}
		g.l1s = append(g.l1s, r.Default.L1)
		if r.Oracle != nil {
			g.withOracle++
			g.ratios = append(g.ratios, r.Ratio())
			if r.Ratio() <= MaxRatio {
				g.ratioOK++
			}
		}
		if q := r.Default.Chi2r / r.Default.Chi2rTarget; q >= MinChi2Ratio && q <= MaxChi2Ratio {
			g.chiOK++
		}
		if r.Default.Mirrored {
			g.mirrored++
		}
	}
	for _, r := range rows {
		add("all", r)
		add(r.Array+"/"+r.Model, r)
	}
	sort.Strings(keys[1:])
	b.WriteString("| cases | n | errors | median L1 | L1 ≤ 1.25 × oracle | median ratio | χ²ᵣ/expected in 0.8–1.25 | mirrored |\n")
	b.WriteString("| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: |\n")
	for _, k := range keys {
		g := groups[k]
		ratio, rmed := "–", "–"
		if g.withOracle > 0 {
			ratio = fmt.Sprintf("%d/%d", g.ratioOK, g.withOracle)
			rmed = fmt.Sprintf("%.2f", median(g.ratios))
		}
		fmt.Fprintf(&b, "| %s | %d | %d | %.3f | %s | %s | %d/%d | %d |\n", k, g.n, g.errs, median(g.l1s), ratio, rmed, g.chiOK, g.n-g.errs, g.mirrored)
	}
	return b.String()
}

// median returns the median of x (NaN for none); x is reordered.
func median(x []float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	sort.Float64s(x)
	m := len(x) / 2
	if len(x)%2 == 1 {
		return x[m]
	}
	return (x[m-1] + x[m]) / 2
}
