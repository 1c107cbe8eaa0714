package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"
	"time"

	"polypledger/logbook"
	"polypledger/store"
)

// errHelp reports that -h was asked for and usage has been printed.
var errHelp = errors.New("help shown")

// newFlags makes a command's flag set that prints its usage line to w.
func newFlags(name, synopsis string, w io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(w)
	fs.Usage = func() {
		fmt.Fprintf(w, "usage: polypledger %s %s\n", name, synopsis)
		fs.PrintDefaults()
	}
	return fs
}

// parse parses flags that may stand before or after positional arguments
// and returns the positional ones.
func parse(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				return nil, errHelp
			}
			return nil, usageError{msg: err.Error(), shown: true} // the flag package printed the usage
		}
		args = fs.Args()
		if len(args) == 0 {
			return pos, nil
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
}

// need refuses a missing required flag value.
func need(flagName, value string) error {
	if strings.TrimSpace(value) == "" {
		return usagef("--%s is required", flagName)
	}
	return nil
}

// parseDateFlag reads a --from/--to date.
func parseDateFlag(flagName, value string) (time.Time, error) {
	if err := need(flagName, value); err != nil {
		return time.Time{}, err
	}
	d, err := logbook.ParseDate(value)
	if err != nil {
		return time.Time{}, usagef("--%s: %v", flagName, err)
	}
	return d, nil
}

// periodFlags reads the --from and --to dates of an audit period, both
// required, the first not after the last.
func periodFlags(fromS, toS string) (from, to time.Time, err error) {
	if from, err = parseDateFlag("from", fromS); err != nil {
		return from, to, err
	}
	if to, err = parseDateFlag("to", toS); err != nil {
		return from, to, err
	}
	if to.Before(from) {
		return from, to, usagef("--to %s is before --from %s", toS, fromS)
	}
	return from, to, nil
}

// parseFlagsOnly parses a command that takes flags and no other arguments.
func parseFlagsOnly(fs *flag.FlagSet, args []string) error {
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) > 0 {
		return usagef("unexpected argument %q", pos[0])
	}
	return nil
}

// dbUsage is the help text of every command's --db flag.
const dbUsage = "database: a file, or a postgres:// URL of a unit server (default $POLYPLEDGER_DB)"

// defaultDB is the --db value when none is given: $POLYPLEDGER_DB, which
// a workstation of a unit server sets to the server's URL.
func defaultDB() string { return os.Getenv("POLYPLEDGER_DB") }

// mustExist refuses a --db path that names no file, rather than letting a
// reading command create an empty database. A server database is checked
// when it is opened.
func mustExist(db string) error {
	if store.IsServerURL(db) {
		return nil
	}
	if _, err := os.Stat(db); err != nil {
		return fmt.Errorf("database %s does not exist", db)
	}
	return nil
}
