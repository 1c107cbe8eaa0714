// Package safefile writes files so that nobody ever sees half of one and
// nothing is replaced unasked: a file is written under a temporary name
// beside its target, readable by its owner only from the moment it exists,
// synced to disk, and only then put in place — linked, which fails rather
// than replace a file that is there, or renamed over the target when the
// caller has been told to replace it. A temporary name carries the
// computer and process that made it, so that a later run can remove what a
// killed run left behind. It imports nothing of the project.
package safefile

import (
	"crypto/rand"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"syscall"
)

// ErrExists is matched (errors.Is) by Place's error when the target exists
// and may not be replaced. It is fs.ErrExist.
var ErrExists = fs.ErrExist

// tempMark separates a target's name from the rest of a temporary name:
// ".NAME.tmp-HOST-PID-RANDOM".
const tempMark = ".tmp-"

// host identifies this computer in temporary names, without naming it.
var host = func() string {
	h, _ := os.Hostname()
	sum := sha256.Sum256([]byte(h))
	return hex.EncodeToString(sum[:4])
}()

// tempPrefix is the start of every temporary name for path.
func tempPrefix(path string) string {
	return "." + filepath.Base(path) + tempMark
}

// Create makes a new, empty temporary file beside path, readable and
// writable by its owner only (on Windows the folder's permissions apply).
// The caller writes it and then calls Place, or removes it. Temporaries
// that killed runs left beside path are removed first.
func Create(path string) (*os.File, error) {
	RemoveStale(path)
	var rnd [6]byte
	if _, err := rand.Read(rnd[:]); err != nil {
		return nil, err
	}
	name := filepath.Join(filepath.Dir(path), tempPrefix(path)+host+"-"+strconv.Itoa(os.Getpid())+"-"+hex.EncodeToString(rnd[:]))
	f, err := os.OpenFile(name, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o600)
	if err != nil {
		return nil, err
	}
	return f, nil
}

// Place puts the finished temporary file tmp (made by Create and closed)
// at path: it is synced to disk, then linked to path — which fails with
// ErrExists if path exists — or, when replace is set, renamed over it; the
// folder is synced so that the new name survives a power cut. tmp is gone
// afterwards in every case.
func Place(tmp, path string, replace bool) error {
	defer os.Remove(tmp)
	if err := syncFile(tmp); err != nil {
		return err
	}
	if replace {
		if err := os.Rename(tmp, path); err != nil {
			return err
		}
	} else if err := os.Link(tmp, path); err != nil {
		if errors.Is(err, fs.ErrExist) {
			return fmt.Errorf("%s: %w", path, ErrExists)
		}
		// A file system without hard links: look, then rename (which
		// would replace a file made in between; such systems are rare).
		if _, serr := os.Lstat(path); serr == nil {
			return fmt.Errorf("%s: %w", path, ErrExists)
		}
		if err := os.Rename(tmp, path); err != nil {
			return err
		}
	}
	syncDir(filepath.Dir(path))
	return nil
}

// syncFile flushes a file's contents to disk.
func syncFile(path string) error {
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// syncDir flushes a folder's entries to disk, where the system allows it
// (not on Windows, where a rename is durable once it returns).
func syncDir(dir string) {
	if runtime.GOOS == "windows" {
		return
	}
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
}

// RemoveStale removes the temporary files beside path (with any journal
// SQLite kept beside them) that a process of this computer made and that
// is no longer running: what a run killed half-way left behind.
// Temporaries of running processes and of other computers are left alone.
func RemoveStale(path string) {
	dir := filepath.Dir(path)
	entries, err := os.ReadDir(dir)
	if err != nil {
		return
	}
	prefix := tempPrefix(path)
	for _, e := range entries {
		rest, ok := strings.CutPrefix(e.Name(), prefix)
		if !ok {
			continue
		}
		parts := strings.SplitN(rest, "-", 3)
		if len(parts) < 3 || parts[0] != host {
			continue
		}
		pid, err := strconv.Atoi(parts[1])
		if err != nil || running(pid) {
			continue
		}
		os.Remove(filepath.Join(dir, e.Name()))
	}
}

// IsTemp reports whether name is a temporary name this package makes.
func IsTemp(name string) bool {
	return strings.HasPrefix(name, ".") && strings.Contains(name, tempMark)
}

// running reports whether a process with this id exists on this computer.
func running(pid int) bool {
	if pid == os.Getpid() {
		return true
	}
	p, err := os.FindProcess(pid)
	if err != nil {
		return false
	}
	if runtime.GOOS == "windows" {
		p.Release()
		return true // FindProcess opens the process: it exists
	}
	err = p.Signal(syscall.Signal(0))
	return err == nil || errors.Is(err, os.ErrPermission) || errors.Is(err, syscall.EPERM)
}
