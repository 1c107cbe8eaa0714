package demo_test

import (
	"testing"

	"polypledger/demo"
	"polypledger/logbook"
)

// benchProcedures is the size of the unit each benchmark iteration invents;
// the README's target is a million procedures in under a minute, so the
// ns/procedure figure times 1,000,000 should stay under 6e10.
const benchProcedures = 50000

// BenchmarkDemo invents and stores a 50,000-procedure unit per iteration:
// generation, validation, inserts and the change-log entry, in one
// transaction on a real SQLite file.
func BenchmarkDemo(b *testing.B) {
	for b.Loop() {
		load(b, b.TempDir(), demo.Options{Procedures: benchProcedures, Seed: 1, Key: []byte("k")})
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchProcedures), "ns/procedure")
}

// BenchmarkGenerate is the generator alone, without the database.
func BenchmarkGenerate(b *testing.B) {
	for b.Loop() {
		n := 0
		demo.Generate(demo.Options{Procedures: benchProcedures, Seed: 1, Key: []byte("k")}, func(c *logbook.Case) error {
			n += len(c.Lesions)
			return nil
		})
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchProcedures), "ns/procedure")
}
