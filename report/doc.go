// Package report draws what package audit computed: the charts (gonum/plot,
// rendered to PNG once and shown by both the PDF and the desktop app), the
// PDF reports (gofpdf) — the unit audit, an endoscopist's personal report and
// a trainee's logbook — with their methods pages, and the metrics command's
// terminal table. It computes no figure of its own: values print as the
// audit catalogue says (audit.Definition.Scaler), as image/png encodes what
// package image holds. It may import audit, stats, surveillance, logbook,
// gofpdf and gonum/plot, but no UI or SQL package.
package report
