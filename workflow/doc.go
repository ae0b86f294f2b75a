// Package workflow runs what the commands of vcz do, as functions of typed values: one
// reconstruction (NewImage, Image.Run), several regularizers on the same data
// (CompareEntries, NewComparison, Comparison.Run and Write), many epochs of one target,
// independently and jointly (Epochs, Batch.RunShard, Batch.Joint, Collect), and the fit of
// a parametric model (FitModel). The command parses flags into runspec.Spec values, calls
// these, and prints; everything it does is reachable from Go without flag strings. The
// files a result is written to are package output's.
//
// # Layers
//
// Imports point one way: cmd/vcz → workflow → output, runspec → recon → nufft,
// regularizers, io/... Results go from one step to the next in memory: the image a batch
// epoch wrote is the one its joint reconstruction starts from, without reading the FITS
// file back (except for epochs found complete from an earlier run, whose files are all
// there is).
//
// # Scheduling
//
// RunTasks is the one scheduler: tasks start in order as soon as their worker goroutines
// fit in a budget (GOMAXPROCS by default), their errors come back in task order, and a
// panic in a task becomes a *PanicError naming it while the others go on (Safely). Each
// task writes only its own results, and a reconstruction gives the same bits for any
// number of transform workers (recon.Settings.Workers), so every output is the same for any
// budget and any order of completion.
//
// # Errors
//
// An error caused by the user's input (a file that cannot be read, options that do not fit
// the data, a bad job file) is an *InputError, with the file when there is one; any other
// error is a failure of the computation or of writing. cmd/vcz exits with status 2 for the
// first kind and 1 for the second.
package workflow
