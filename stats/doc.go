// Package stats holds the statistics the audit figures are built from:
// Wilson, Clopper–Pearson, Garwood and Student t intervals, Newcombe's
// interval for a difference, Cohen's kappa with its Fleiss–Cohen–Everitt
// standard error, exact binomial funnel limits and the Bolsin–Colson CUSUM.
// They are pure functions of counts over gonum's distributions, each with its
// published source, as golang.org/x/perf's benchmath is: no I/O, no records.
// It may import the standard library and gonum only — nothing of the project
// and no PDF, chart, UI or SQL package (a test in package audit checks).
package stats
