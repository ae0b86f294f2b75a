package workflow_test

import (
	"fmt"

	"vcz/runspec"
	"vcz/workflow"
)

// A comparison runs one spec per regularizer: the shared options with that regularizer
// alone and, where given, its own weight.
func ExampleCompareEntries() {
	entries, err := workflow.CompareEntries(runspec.Spec{Grid: 64}, "mem,tv", "mem=1e4")
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, e := range entries {
		fmt.Printf("%s: %q\n", e.Name, e.Spec.String())
	}
	// Output:
	// mem: "n=64\nreg=mem\nweight=10000\n"
	// tv: "n=64\n"
}

// RunTasks returns the tasks' errors in their order, a panic turned into an error that
// names its task.
func ExampleRunTasks() {
	tasks := []workflow.Task{
		{Name: "first", Do: func() error { return nil }},
		{Name: "second", Do: func() error { panic("out of range") }},
		{Name: "third", Workers: 2, Do: func() error { return fmt.Errorf("third: no data") }},
	}
	for i, err := range workflow.RunTasks(tasks, workflow.PoolOptions{Budget: 2}) {
		fmt.Println(i, err)
	}
	// Output:
	// 0 <nil>
	// 1 internal error in second: out of range
	// 2 third: no data
}
