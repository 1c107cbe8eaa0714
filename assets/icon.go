package assets

import _ "embed" // for the icon bytes

//go:embed icon.png
var iconPNG []byte

// IconName is the file name the icon goes by: in the Linux desktop entry's
// icon theme folder and as the name of a toolkit resource made from
// IconPNG.
const IconName = "polypledger.png"

// IconPNG returns the program's icon, a 256×256 PNG drawn by package
// assets/icon (regenerate it with "make icon"). The app turns it into a
// window icon with fyne.NewStaticResource(IconName, IconPNG()); it is bytes
// here so that packages without a user interface need not import the
// toolkit. The slice is shared; callers must not modify it.
func IconPNG() []byte { return iconPNG }
