package store

import (
	"context"
	"crypto/hmac"
	"crypto/rand"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strings"

	"polypledger/internal/safefile"
)

// KeyFileName is the unit key's file name inside the config directory.
const KeyFileName = "unit.key"

// ConfigDir returns the folder that holds the settings, the unit key and
// (by default) the database: $POLYPLEDGER_HOME when set, else the OS's user
// config directory (%AppData% on Windows, ~/.config on Linux,
// ~/Library/Application Support on macOS) with "polypledger" appended.
func ConfigDir() (string, error) {
	if d := os.Getenv("POLYPLEDGER_HOME"); d != "" {
		return d, nil
	}
	base, err := os.UserConfigDir()
	if err != nil {
		return "", fmt.Errorf("cannot find the user configuration folder: %w", err)
	}
	return filepath.Join(base, "polypledger"), nil
}

// DefaultDBPath is the database opened when none is named.
func DefaultDBPath() (string, error) {
	d, err := ConfigDir()
	if err != nil {
		return "", err
	}
	return filepath.Join(d, "unit.db"), nil
}

// LoadOrCreateKey returns the unit key kept in dir, creating a new random
// 32-byte key (file mode 0600, folder 0700) on first use. The key is what
// turns hospital numbers into pseudonyms: if it is lost, stored pseudonyms
// can no longer be matched to the same patients in new imports, so it must
// be backed up together with the database but kept apart from it.
func LoadOrCreateKey(dir string) ([]byte, error) {
	path := filepath.Join(dir, KeyFileName)
	b, err := os.ReadFile(path)
	if err == nil {
		key, err := hex.DecodeString(strings.TrimSpace(string(b)))
		if err != nil || len(key) < 16 {
			return nil, fmt.Errorf("unit key %s is damaged (expected hex digits); restore it from your key backup", path)
		}
		return key, nil
	}
	if !errors.Is(err, os.ErrNotExist) {
		return nil, fmt.Errorf("cannot read unit key %s: %w", path, err)
	}
	if err := os.MkdirAll(dir, 0o700); err != nil {
		return nil, fmt.Errorf("cannot create folder %s for the unit key: %w", dir, err)
	}
	key := make([]byte, 32)
	if _, err := rand.Read(key); err != nil {
		return nil, err
	}
	// Write the key under a temporary name (owner-only from the start) and
	// link it into place, so that a key file is never seen half-written and
	// two programs starting at once agree on one key: the second finds the
	// first's and uses it.
	tmp, err := safefile.Create(path)
	if err != nil {
		return nil, fmt.Errorf("cannot create unit key in %s: %w", dir, err)
	}
	if _, err := tmp.WriteString(hex.EncodeToString(key) + "\n"); err != nil {
		tmp.Close()
		os.Remove(tmp.Name())
		return nil, fmt.Errorf("cannot write unit key %s: %w", path, err)
	}
	if err := tmp.Close(); err != nil {
		os.Remove(tmp.Name())
		return nil, fmt.Errorf("cannot write unit key %s: %w", path, err)
	}
	if err := safefile.Place(tmp.Name(), path, false); err != nil {
		if errors.Is(err, safefile.ErrExists) {
			return LoadOrCreateKey(dir) // another program created it first
		}
		return nil, fmt.Errorf("cannot create unit key %s: %w", path, err)
	}
	return key, nil
}

// keyCheckSetting names the setting that holds the unit key's fingerprint.
const keyCheckSetting = "key_check"

// keyFingerprint identifies a unit key without revealing it: the first 16
// hex digits of an HMAC of a fixed text under the key.
func keyFingerprint(key []byte) string {
	m := hmac.New(sha256.New, key)
	m.Write([]byte("polypledger unit key check"))
	return hex.EncodeToString(m.Sum(nil))[:16]
}

// ErrOtherKey is returned (wrapped) when a database's pseudonyms were made
// under a different unit key from the one offered.
var ErrOtherKey = errors.New("this database's patient pseudonyms were made with another unit key")

// checkKey makes sure, before a hospital number is turned into a
// pseudonym, that the store's key is the one the database's pseudonyms were
// made with; the first time, it records the key's fingerprint (in tx, with a
// change-log entry). Several users sharing one database therefore cannot
// silently give one patient two pseudonyms.
func (s *Store) checkKey(ctx context.Context, tx *txn) error {
	fp := keyFingerprint(s.key)
	var have string
	err := tx.QueryRowContext(ctx, "SELECT value FROM settings WHERE key = ?", keyCheckSetting).Scan(&have)
	switch {
	case errors.Is(err, sql.ErrNoRows):
		if _, err := tx.ExecContext(ctx, "INSERT INTO settings (key, value) VALUES (?, ?)", keyCheckSetting, fp); err != nil {
			return err
		}
		return s.logChange(ctx, tx, "update", "settings", nil, map[string]string{keyCheckSetting: fp})
	case err != nil:
		return err
	case have != fp:
		return fmt.Errorf("%w; nothing was stored — hospital numbers can be added only under the unit key this database began with: copy that unit.key into your configuration folder (keep a copy of yours first). Exports, metrics and reports do not need it", ErrOtherKey)
	}
	return nil
}

// KeyPermissionWarnings says, one sentence each with the command that
// fixes it, whether other users of the computer can reach the unit key in
// dir: a folder or key file with any permission for its group or for
// others. The program warns and goes on rather than refusing: the key
// still works, and a key replaced by someone else is caught anyway (the
// database's key fingerprint); but whoever reads the key can test guessed
// hospital numbers against the pseudonyms. Nothing is said on Windows,
// where the folder's access list, not these modes, protects the key.
func KeyPermissionWarnings(dir string) []string {
	if runtime.GOOS == "windows" {
		return nil
	}
	var out []string
	for _, f := range []struct {
		path, what, mode string
	}{
		{dir, "folder", "700"},
		{filepath.Join(dir, KeyFileName), "file", "600"},
	} {
		fi, err := os.Stat(f.path)
		if err != nil || fi.Mode().Perm()&0o077 == 0 {
			continue
		}
		out = append(out, fmt.Sprintf("warning: other users of this computer can open the unit key's %s %s (mode %04o); make it yours alone with: chmod %s '%s'",
			f.what, f.path, fi.Mode().Perm(), f.mode, strings.ReplaceAll(f.path, "'", `'\''`)))
	}
	return out
}
