// Command vcz reconstructs images of the sky from optical and infrared
// interferometric data in the OIFITS format. See doc.go for the manual.
package main

import "os"

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}
