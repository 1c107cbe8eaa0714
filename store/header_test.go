package store

import "testing"

// A main file shorter than its header promises is damaged — unless a
// write-ahead log lies beside it, as after a checkpoint cut short by a
// crash; SQLite then completes the file from the log (seen in
// TestImportKilledLeavesNothingOrEverything when the kill lands in the final
// checkpoint).
func TestShortFileWithLogIsNotDamaged(t *testing.T) {
	sqliteOnly("a file header and its write-ahead log")
	short := fileHeader{exists: true, size: 4 * 4096, pageSize: 4096, pages: 10}
	if err := short.vet("x.db", SchemaVersion); err == nil {
		t.Error("a short file with no write-ahead log was accepted")
	}
	short.wal = true
	if err := short.vet("x.db", SchemaVersion); err != nil {
		t.Errorf("a short file with its write-ahead log was refused: %v", err)
	}
	ragged := fileHeader{exists: true, size: 4*4096 + 100, pageSize: 4096, wal: true}
	if err := ragged.vet("x.db", SchemaVersion); err == nil {
		t.Error("a file that is not a whole number of pages was accepted")
	}
}
