package workspace

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"polypledger/internal/safefile"
	"polypledger/store"
)

// Output is a file that a command or a screen writes — an export or a
// report — and what it may replace. Every output is written the same way:
// under a temporary name beside Path, readable by its owner only from the
// moment it exists, synced to disk, and put in place only once it is whole,
// so that a failed, cancelled or killed write never leaves half a file (and
// what a killed one left is removed by the next write to the same place).
type Output struct {
	Path string
	// Replace allows an existing file at Path to be replaced: a command's
	// --force, or a save dialog that has asked. Without it an existing
	// file is never touched, even one that appears while the output is
	// being made.
	Replace bool
	// Database is the database the output is made from. Neither it nor
	// its journals — nor any other SQLite database — is ever replaced,
	// whatever Replace says.
	Database string
}

// Check refuses, before any work is done, an output that Write would
// refuse (see store.CheckOutput).
func (o Output) Check() error {
	abs, err := filepath.Abs(o.Path)
	if err != nil {
		return err
	}
	db := o.Database
	if db != "" {
		if db, err = filepath.Abs(db); err != nil {
			return err
		}
	}
	return store.CheckOutput(abs, db, o.Replace)
}

// Write makes the file with write (see Output).
func (o Output) Write(write func(w io.Writer) error) error {
	if err := o.Check(); err != nil {
		return err
	}
	f, err := safefile.Create(o.Path)
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", o.Path, err)
	}
	tmp := f.Name()
	if err := write(f); err != nil {
		f.Close()
		os.Remove(tmp)
		return fmt.Errorf("writing %s: %w", o.Path, err)
	}
	if err := f.Close(); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("writing %s: %w", o.Path, err)
	}
	if err := safefile.Place(tmp, o.Path, o.Replace); err != nil {
		if errors.Is(err, safefile.ErrExists) {
			return fmt.Errorf("%s appeared while it was being written, and was left as it is; choose another name", o.Path)
		}
		return fmt.Errorf("writing %s: %w", o.Path, err)
	}
	return nil
}

// PageCounter passes a PDF on to W and counts its pages as they go by, so
// that a command can say how many pages it wrote: each page object of the
// PDF writer's output carries the line "/Type /Page" (the page tree's own
// says "/Pages").
type PageCounter struct {
	W     io.Writer
	Pages int
	tail  []byte // the end of what was written, for a marker split between writes
}

var pageMarker = []byte("/Type /Page\n")

func (c *PageCounter) Write(p []byte) (int, error) {
	buf := append(c.tail, p...)
	c.Pages += bytes.Count(buf, pageMarker)
	keep := min(len(buf), len(pageMarker)-1)
	c.tail = append(c.tail[:0], buf[len(buf)-keep:]...)
	return c.W.Write(p)
}
