package safefile_test

import (
	"fmt"
	"io"
	"os"
	"path/filepath"

	"vcz/io/safefile"
)

func ExampleWrite() {
	dir, err := os.MkdirTemp("", "safefile-example")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "notes.txt")
	err = safefile.Write(path, func(w io.Writer) error {
		_, err := fmt.Fprintln(w, "complete or absent")
		return err
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	b, _ := os.ReadFile(path)
	fmt.Print(string(b))
	// Output: complete or absent
}
