// Package report draws what package audit computed: the charts (gonum/plot,
// rendered to PNG once and shown by both the PDF and the desktop app) and the
// PDF reports (gofpdf) — the unit audit, an endoscopist's personal report and
// a trainee's logbook — with their methods pages. It computes no figure of
// its own. It may import audit, stats, surveillance, logbook, gofpdf and
// gonum/plot, but no UI or SQL package.
package report
