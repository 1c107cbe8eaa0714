package assets

import (
	"golang.org/x/image/font/gofont/gobold"
	"golang.org/x/image/font/gofont/goregular"
)

// The report font is the Go font family (regular and bold), which covers the
// characters the reports print beyond ASCII: ≥, ≤, ±, µ, κ, α, β, χ², the
// minus and en dashes, and the accented letters of staff names. Its TrueType
// bytes come from the golang.org/x/image module, so no font file is shipped
// beside the program.

// FontRegular returns the TrueType bytes of the regular report font. The
// slice is shared; callers must not modify it.
func FontRegular() []byte { return goregular.TTF }

// FontBold returns the TrueType bytes of the bold report font. The slice is
// shared; callers must not modify it.
func FontBold() []byte { return gobold.TTF }
