package report

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
)

// TestLabelsDoNotCollide places labels for points crowded together and
// checks that no label covers another label or a mark.
func TestLabelsDoNotCollide(t *testing.T) {
	area := vg.Rectangle{Max: vg.Point{X: 400, Y: 300}}
	marks := []vg.Point{{X: 100, Y: 100}, {X: 104, Y: 102}, {X: 108, Y: 98}, {X: 100, Y: 108}, {X: 395, Y: 150}}
	var taken []vg.Rectangle
	for _, m := range marks {
		taken = append(taken, vg.Rectangle{Min: vg.Point{X: m.X - 3, Y: m.Y - 3}, Max: vg.Point{X: m.X + 3, Y: m.Y + 3}})
	}
	var labels []vg.Rectangle
	for _, m := range marks {
		box := placeLabel(area, taken, m, 5, 20, 8)
		for i, l := range labels {
			if overlaps(box, l) {
				t.Errorf("label at %v covers label %d at %v", box, i, l)
			}
		}
		for i, o := range taken[:len(marks)] {
			if overlaps(box, o) {
				t.Errorf("label at %v covers mark %d", box, i)
			}
		}
		if box.Max.X > area.Max.X {
			t.Errorf("label at %v runs off the chart", box)
		}
		taken = append(taken, box)
		labels = append(labels, box)
	}
}

func TestCountTicksAreWholeNumbers(t *testing.T) {
	for _, r := range [][2]float64{{0, 250}, {0, 12}, {0, 4500}} {
		for _, tk := range (countTicks{}).Ticks(r[0], r[1]) {
			if tk.Value != math.Trunc(tk.Value) || strings.Contains(tk.Label, ".") {
				t.Errorf("range %v: tick %v labelled %q", r, tk.Value, tk.Label)
			}
		}
	}
	ticks := (countTicks{}).Ticks(0, 4500)
	found := false
	for _, tk := range ticks {
		found = found || tk.Label == "4,000"
	}
	if !found {
		t.Errorf("ticks over 0–4500 do not read 4,000: %v", ticks)
	}
}
