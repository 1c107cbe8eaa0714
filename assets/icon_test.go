package assets

import (
	"bytes"
	"image/png"
	"testing"
)

// TestIconPNG checks that the embedded icon is a PNG of the size the Linux
// desktop entry's icon folder (hicolor/256x256) promises.
func TestIconPNG(t *testing.T) {
	cfg, err := png.DecodeConfig(bytes.NewReader(IconPNG()))
	if err != nil {
		t.Fatalf("embedded icon is not a PNG: %v", err)
	}
	if cfg.Width != 256 || cfg.Height != 256 {
		t.Errorf("embedded icon is %d×%d, want 256×256", cfg.Width, cfg.Height)
	}
}
