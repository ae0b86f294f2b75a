package batch_test

import (
	"fmt"

	"vcz/recon/batch"
)

// Three nights of observations split at gaps of more than half a day, and the epochs
// taken by the second of two job-array tasks.
func Example() {
	mjd := []float64{61203.10, 61203.25, 61204.12, 61204.30, 61206.05}
	epochs := batch.Clusters(mjd, 0.5)
	fmt.Println(len(epochs), "epochs")
	sh, _ := batch.ParseShard("2/2")
	for i, e := range epochs {
		if sh.Take(i) {
			fmt.Printf("shard %v takes epoch %d: MJD %.2f to %.2f\n", sh, i+1, e.Min, e.Max)
		}
	}
	// Output:
	// 3 epochs
	// shard 2/2 takes epoch 2: MJD 61204.12 to 61204.30
}
