//go:build ignore

// Command gen writes the program's icon as a PNG file:
//
//	go run ./assets/icon/gen.go -o assets/icon.png
//
// "make icon" runs it; the result is committed so that builds need no
// generation step.
package main

import (
	"flag"
	"fmt"
	"image/png"
	"os"

	"polypledger/assets/icon"
)

func main() {
	out := flag.String("o", "assets/icon.png", "PNG file to write")
	size := flag.Int("size", icon.Size, "edge in pixels")
	flag.Parse()
	if err := write(*out, *size); err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
}

func write(path string, size int) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	enc := png.Encoder{CompressionLevel: png.BestCompression}
	if err := enc.Encode(f, icon.Draw(size)); err != nil {
		f.Close()
		return fmt.Errorf("encoding %s: %w", path, err)
	}
	return f.Close()
}
