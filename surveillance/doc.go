// Package surveillance suggests the post-polypectomy surveillance interval of
// a procedure under a published guideline (USMSTF 2020, ESGE 2020, BSG 2020;
// clinical-reference §4): how each lesion is read (final histology, a
// high-confidence optical call standing in for it, no specimen, or awaiting
// histology), the exam gate, findings outside the tables, each guideline's
// table with the shortest interval winning, the reasons in plain words and
// the caution every interval carries. It may import the standard library and
// logbook only — no PDF, chart, UI or SQL package (a test in package audit
// checks).
package surveillance
