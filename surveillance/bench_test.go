package surveillance

import (
	"testing"

	"polypledger/internal/fx"
)

// BenchmarkSuggest measures one interval suggestion per case.
func BenchmarkSuggest(b *testing.B) {
	c := fx.Typical()
	b.ReportAllocs()
	for b.Loop() {
		Suggest(USMSTF2020, c)
	}
}
