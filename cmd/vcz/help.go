package main

import _ "embed"

// The help texts of the commands, printed by -help above the list of options, are the files
// in help/, embedded as they are (newFlagSet trims their ends). bootstrapDoc is the
// paragraph of 'vcz image -help' about the bootstrap, on the line after imageDoc.
var (
	//go:embed help/batch.txt
	batchDoc string
	//go:embed help/bootstrap.txt
	bootstrapDoc string
	//go:embed help/compare.txt
	compareDoc string
	//go:embed help/demo.txt
	demoDoc string
	//go:embed help/fit.txt
	fitDoc string
	//go:embed help/image.txt
	imageDoc string
	//go:embed help/inspect.txt
	inspectDoc string
	//go:embed help/simulate.txt
	simulateDoc string
)
