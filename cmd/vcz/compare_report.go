package main

import (
	"fmt"
	"io"

	"vcz/workflow"
)

func printCompareTable(w io.Writer, rep *workflow.CompareReport) {
	fmt.Fprintf(w, "Grid: %d × %d pixels of %.4g mas; resolution %.4g mas\n", rep.Grid.N, rep.Grid.N, rep.Grid.PixelMas, rep.Grid.ResolutionMas)
	fmt.Fprintf(w, "%-10s %-10s %-8s %-10s %-6s %-13s %s\n", "reg", "weight", "χ²ᵣ", "R(x)", "iter", "result", "seconds")
	for _, r := range rep.Rows {
		if r.Error != "" {
			fmt.Fprintf(w, "%-10s FAILED: %s\n", r.Regularizer, r.Error)
			continue
		}
		// A row with warnings never reads as a success.
		result := "converged"
		switch {
		case len(r.Warnings) > 0:
			result = countWarnings(len(r.Warnings))
		case !r.Converged:
			result = "stopped"
		}
		fmt.Fprintf(w, "%-10s %-10.4g %-8.4g %-10.4g %-6d %-13s %.1f\n", r.Regularizer, r.Weight, r.Chi2r, r.RegValue, r.Iterations, result, r.Seconds)
	}
}
