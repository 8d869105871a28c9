package input_test

import (
	"archive/zip"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/sondeclim/sondeclim/ingest/input"
)

func ExampleEach() {
	dir, err := os.MkdirTemp("", "example")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)

	// A zip holding two invented station files.
	path := filepath.Join(dir, "stations.zip")
	f, err := os.Create(path)
	if err != nil {
		fmt.Println(err)
		return
	}
	zw := zip.NewWriter(f)
	for _, name := range []string{"QQM00000001-data.txt", "QQM00000002-data.txt"} {
		w, _ := zw.Create(name)
		fmt.Fprintf(w, "#%s 2020 01 01 00 2330    0\n", name[:11])
	}
	zw.Close()
	f.Close()

	files, err := input.Expand([]string{dir})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, file := range files {
		err := input.Each(file, 0, func(member string, r io.Reader) error {
			b, err := io.ReadAll(r)
			fmt.Printf("%s: %d bytes\n", member, len(b))
			return err
		})
		if err != nil {
			fmt.Println(err)
		}
	}
	// Output:
	// QQM00000001-data.txt: 37 bytes
	// QQM00000002-data.txt: 37 bytes
}
