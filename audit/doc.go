// Package audit turns a unit's records into audit figures in one streaming
// pass: standard profiles and their targets, the detection and procedure
// indicators, trends by quarter and rolling ADR, funnel plots' data, the
// optical-diagnosis audit with PIVI 1 and 2 and the resect-and-discard
// eligibility figures, surveillance interval adherence and trainees'
// progress, each judged against its target, and how each figure prints. It
// reads logbook records (streamed by the caller, or a literal slice in a
// test) and does no I/O, so every figure is tested on literal records; the
// PDF and the charts (package report) and the screens (package app) only
// show what it computed, as image/png encodes what package image holds. It
// may import the standard library, gonum, logbook, stats and surveillance —
// no PDF, chart, UI or SQL package (TestArithmeticImportsNoRenderer checks).
package audit
