// Package icon draws the program's icon: a stylised outline of the large
// bowel (caecum, ascending, transverse and descending colon, sigmoid and
// rectum) around a tick, on a rounded slate square. The mark is drawn here
// from a few lines and arcs so that the shipped PNG (assets/icon.png,
// written by gen.go with "make icon") can always be traced back to code.
package icon

import (
	"image"
	"image/color"
	"math"
)

// Size is the edge in pixels of the shipped icon, the size the Linux
// desktop looks for in hicolor/256x256/apps.
const Size = 256

// The palette: a deep slate ground, a warm peach bowel and a mint tick.
var (
	ground = color.NRGBA{R: 0x26, G: 0x3B, B: 0x55, A: 0xFF}
	bowel  = color.NRGBA{R: 0xF4, G: 0xB1, B: 0x83, A: 0xFF}
	tick   = color.NRGBA{R: 0x8E, G: 0xE4, B: 0xAF, A: 0xFF}
)

// point is a position in the unit square, y growing downwards.
type point struct{ x, y float64 }

// stroke is a polyline drawn with round ends and joins.
type stroke struct {
	pts  []point
	half float64 // half the line width, in unit-square lengths
	col  color.NRGBA
}

// Draw renders the icon as a size×size image with a transparent surround.
// Edges are anti-aliased from exact distances, so every size is drawn
// afresh rather than scaled.
func Draw(size int) *image.NRGBA {
	img := image.NewNRGBA(image.Rect(0, 0, size, size))
	strokes := []stroke{
		{pts: bowelPath(), half: 0.046, col: bowel},
		{pts: []point{{0.385, 0.480}, {0.465, 0.560}, {0.620, 0.395}}, half: 0.038, col: tick},
	}
	caecum := point{0.270, 0.740}
	const caecumR = 0.068
	px := 1 / float64(size) // one pixel in unit-square lengths
	for j := 0; j < size; j++ {
		for i := 0; i < size; i++ {
			p := point{(float64(i) + 0.5) * px, (float64(j) + 0.5) * px}
			var c [4]float64 // premultiplied RGBA in 0..1
			over(&c, ground, coverage(roundedSquare(p, 0.04, 0.96, 0.20), px))
			over(&c, bowel, coverage(dist(p, caecum)-caecumR, px))
			for _, s := range strokes {
				over(&c, s.col, coverage(polylineDist(p, s.pts)-s.half, px))
			}
			img.SetNRGBA(i, j, unpremultiply(c))
		}
	}
	return img
}

// bowelPath traces the colon as a viewer sees it facing the patient: up the
// ascending colon on the left, across, down the descending colon on the
// right, then the sigmoid swinging in towards the middle and the rectum
// running down.
func bowelPath() []point {
	var pts []point
	pts = append(pts, point{0.270, 0.740})
	pts = append(pts, arc(point{0.370, 0.350}, 0.100, math.Pi, 1.5*math.Pi)...)   // hepatic flexure
	pts = append(pts, arc(point{0.630, 0.330}, 0.100, 1.5*math.Pi, 2*math.Pi)...) // splenic flexure
	pts = append(pts, point{0.730, 0.590})
	pts = append(pts, cubic(point{0.730, 0.590}, point{0.730, 0.790}, point{0.500, 0.610}, point{0.520, 0.790})...)
	pts = append(pts, point{0.520, 0.860})
	return pts
}

// arc samples a circular arc from angle a0 to a1 (radians, clockwise on
// screen since y grows downwards).
func arc(c point, r, a0, a1 float64) []point {
	const n = 24
	pts := make([]point, 0, n+1)
	for k := 0; k <= n; k++ {
		a := a0 + (a1-a0)*float64(k)/n
		pts = append(pts, point{c.x + r*math.Cos(a), c.y + r*math.Sin(a)})
	}
	return pts
}

// cubic samples a cubic Bézier curve.
func cubic(p0, p1, p2, p3 point) []point {
	const n = 48
	pts := make([]point, 0, n+1)
	for k := 0; k <= n; k++ {
		t := float64(k) / n
		u := 1 - t
		a, b, c, d := u*u*u, 3*u*u*t, 3*u*t*t, t*t*t
		pts = append(pts, point{a*p0.x + b*p1.x + c*p2.x + d*p3.x, a*p0.y + b*p1.y + c*p2.y + d*p3.y})
	}
	return pts
}

func dist(a, b point) float64 { return math.Hypot(a.x-b.x, a.y-b.y) }

// polylineDist is the distance from p to the nearest point of the polyline.
func polylineDist(p point, pts []point) float64 {
	best := math.Inf(1)
	for k := 1; k < len(pts); k++ {
		best = math.Min(best, segmentDist(p, pts[k-1], pts[k]))
	}
	return best
}

func segmentDist(p, a, b point) float64 {
	dx, dy := b.x-a.x, b.y-a.y
	l2 := dx*dx + dy*dy
	if l2 == 0 {
		return dist(p, a)
	}
	t := math.Max(0, math.Min(1, ((p.x-a.x)*dx+(p.y-a.y)*dy)/l2))
	return dist(p, point{a.x + t*dx, a.y + t*dy})
}

// roundedSquare is the signed distance from p to the square [lo,hi]² with
// corners of radius r: negative inside.
func roundedSquare(p point, lo, hi, r float64) float64 {
	c := (lo + hi) / 2
	h := (hi-lo)/2 - r
	qx, qy := math.Abs(p.x-c)-h, math.Abs(p.y-c)-h
	out := math.Hypot(math.Max(qx, 0), math.Max(qy, 0))
	in := math.Min(math.Max(qx, qy), 0)
	return out + in - r
}

// coverage turns a signed distance into the share of a pixel of width px
// that lies inside the shape.
func coverage(d, px float64) float64 {
	return math.Max(0, math.Min(1, 0.5-d/px))
}

// over composites colour col with coverage a over the premultiplied pixel c.
func over(c *[4]float64, col color.NRGBA, a float64) {
	if a == 0 {
		return
	}
	src := [4]float64{float64(col.R) / 255 * a, float64(col.G) / 255 * a, float64(col.B) / 255 * a, a}
	for k := range c {
		c[k] = src[k] + c[k]*(1-a)
	}
}

func unpremultiply(c [4]float64) color.NRGBA {
	if c[3] == 0 {
		return color.NRGBA{}
	}
	ch := func(v float64) uint8 { return uint8(math.Round(255 * math.Min(1, v/c[3]))) }
	return color.NRGBA{R: ch(c[0]), G: ch(c[1]), B: ch(c[2]), A: uint8(math.Round(255 * c[3]))}
}
