// Package e2e holds the end-to-end tests: they build the real polypledger
// binary, start it on a private X display (Xvfb) and drive it with mouse
// and keyboard events (xdotool), as a unit lead, an endoscopist and a
// trainee would, then check what was stored through the command line and
// what was drawn through screenshots (ImageMagick's import).
//
// The tests find what to click through the layout file the program writes
// when POLYPLEDGER_LAYOUT_FILE is set (see the app package). They are
// skipped, saying why, where Xvfb, xdotool or ImageMagick is not
// installed (scripts/setup-debian --test installs them). A screenshot of
// every screen at 1024×700 and 1920×1080 is kept in dist/e2e/ for review.
package e2e
