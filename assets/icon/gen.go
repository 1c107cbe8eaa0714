//go:build ignore

// Command gen writes the program's icon files:
//
//	go run ./assets/icon/gen.go -o assets/icon.png -ico packaging/windows/polypledger.ico
//
// The PNG is the 256×256 icon the app and the Linux desktop entry use; the
// ICO holds the sizes Windows Explorer shows (16 to 256 pixels), each as a
// PNG, for the executable's icon resource. "make icon" runs it; the results
// are committed so that builds need no generation step.
package main

import (
	"bytes"
	"encoding/binary"
	"flag"
	"fmt"
	"image/png"
	"os"

	"polypledger/assets/icon"
)

func main() {
	out := flag.String("o", "assets/icon.png", "PNG file to write")
	ico := flag.String("ico", "", "Windows ICO file to write as well (none when empty)")
	size := flag.Int("size", icon.Size, "edge in pixels of the PNG")
	flag.Parse()
	if err := writePNG(*out, *size); err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
	if *ico != "" {
		if err := writeICO(*ico, []int{16, 24, 32, 48, 64, 128, 256}); err != nil {
			fmt.Fprintln(os.Stderr, "gen:", err)
			os.Exit(1)
		}
	}
}

func encodePNG(size int) ([]byte, error) {
	var b bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.BestCompression}
	if err := enc.Encode(&b, icon.Draw(size)); err != nil {
		return nil, fmt.Errorf("encoding the %d-pixel icon: %w", size, err)
	}
	return b.Bytes(), nil
}

func writePNG(path string, size int) error {
	b, err := encodePNG(size)
	if err != nil {
		return err
	}
	return os.WriteFile(path, b, 0o644)
}

// writeICO writes an ICO file whose images are PNG streams, the form Windows
// Vista and later read: a 6-byte header, a 16-byte entry per image (width
// and height 0 meaning 256), then the images.
func writeICO(path string, sizes []int) error {
	images := make([][]byte, len(sizes))
	for i, s := range sizes {
		b, err := encodePNG(s)
		if err != nil {
			return err
		}
		images[i] = b
	}
	var out bytes.Buffer
	le := binary.LittleEndian
	out.Write(le.AppendUint16(nil, 0))                  // reserved
	out.Write(le.AppendUint16(nil, 1))                  // type: icon
	out.Write(le.AppendUint16(nil, uint16(len(sizes)))) // image count
	offset := 6 + 16*len(sizes)
	for i, s := range sizes {
		edge := byte(s)
		if s >= 256 {
			edge = 0
		}
		out.Write([]byte{edge, edge, 0, 0}) // width, height, palette size, reserved
		out.Write(le.AppendUint16(nil, 1))  // colour planes
		out.Write(le.AppendUint16(nil, 32)) // bits per pixel
		out.Write(le.AppendUint32(nil, uint32(len(images[i]))))
		out.Write(le.AppendUint32(nil, uint32(offset)))
		offset += len(images[i])
	}
	for _, b := range images {
		out.Write(b)
	}
	return os.WriteFile(path, out.Bytes(), 0o644)
}
