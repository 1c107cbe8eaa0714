package icon

import (
	"bytes"
	"image"
	"image/png"
	"os"
	"testing"
)

// TestShippedIconIsDrawn checks that assets/icon.png is what Draw makes, so
// the committed picture cannot drift from the code that defines it (rerun
// "make icon" after changing the drawing). A difference of one level per
// channel is allowed for floating-point rounding on other processors.
func TestShippedIconIsDrawn(t *testing.T) {
	b, err := os.ReadFile("../icon.png")
	if err != nil {
		t.Fatal(err)
	}
	shipped, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("decoding the shipped icon: %v", err)
	}
	want := Draw(Size)
	if shipped.Bounds() != want.Bounds() {
		t.Fatalf("shipped icon is %v, want %v", shipped.Bounds(), want.Bounds())
	}
	bad := 0
	for y := 0; y < Size; y++ {
		for x := 0; x < Size; x++ {
			sr, sg, sb, sa := shipped.At(x, y).RGBA()
			wr, wg, wb, wa := want.At(x, y).RGBA()
			for _, d := range [][2]uint32{{sr, wr}, {sg, wg}, {sb, wb}, {sa, wa}} {
				if diff(d[0]>>8, d[1]>>8) > 1 {
					bad++
					break
				}
			}
		}
	}
	if bad > 0 {
		t.Errorf("%d pixels of assets/icon.png differ from Draw(%d); run make icon", bad, Size)
	}
}

func diff(a, b uint32) uint32 {
	if a > b {
		return a - b
	}
	return b - a
}

// TestDrawParts checks the parts of the mark sit where the drawing says:
// a transparent surround, the slate ground, the bowel outline, the tick and
// an empty ground between them.
func TestDrawParts(t *testing.T) {
	img := Draw(Size)
	at := func(x, y float64) [4]uint8 {
		c := img.NRGBAAt(int(x*Size), int(y*Size))
		return [4]uint8{c.R, c.G, c.B, c.A}
	}
	solid := func(c [4]uint8) [4]uint8 { return [4]uint8{c[0], c[1], c[2], 0xFF} }
	tests := []struct {
		name string
		x, y float64
		want [4]uint8
	}{
		{"corner outside the rounded square", 0.01, 0.01, [4]uint8{}},
		{"ground near the edge", 0.10, 0.50, solid([4]uint8{ground.R, ground.G, ground.B})},
		{"ascending colon", 0.270, 0.500, solid([4]uint8{bowel.R, bowel.G, bowel.B})},
		{"transverse colon", 0.500, 0.240, solid([4]uint8{bowel.R, bowel.G, bowel.B})},
		{"descending colon", 0.730, 0.480, solid([4]uint8{bowel.R, bowel.G, bowel.B})},
		{"caecum", 0.270, 0.760, solid([4]uint8{bowel.R, bowel.G, bowel.B})},
		{"rectum", 0.520, 0.850, solid([4]uint8{bowel.R, bowel.G, bowel.B})},
		{"tick corner", 0.465, 0.555, solid([4]uint8{tick.R, tick.G, tick.B})},
		{"ground inside the bowel", 0.400, 0.680, solid([4]uint8{ground.R, ground.G, ground.B})},
	}
	for _, tc := range tests {
		if got := at(tc.x, tc.y); got != tc.want {
			t.Errorf("%s at (%.3f, %.3f): got %v, want %v", tc.name, tc.x, tc.y, got, tc.want)
		}
	}
}

// TestDrawSizes checks every size asked for comes out square and exact.
func TestDrawSizes(t *testing.T) {
	for _, n := range []int{16, 48, 64} {
		if got := Draw(n).Bounds(); got != image.Rect(0, 0, n, n) {
			t.Errorf("Draw(%d) bounds %v", n, got)
		}
	}
}
