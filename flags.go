package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"slices"
	"strings"
	"time"

	"polypledger/logbook"
	"polypledger/store"
	"polypledger/workspace"
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

// cmdFlags is a command's flag set. The flags several commands share —
// --db, --from and --to, --standard, --guideline, --operator, --format,
// --out and --force — are declared by its with… methods, once, with one
// meaning and one check each; a command declares its own flags on the
// embedded FlagSet. parse reads the arguments and checks the shared flags.
type cmdFlags struct {
	*flag.FlagSet
	db, out, standard, guideline, operator, format string
	force                                          bool
	fromText, toText                               string
	// from and to are the period read from --from and --to.
	from, to time.Time

	hasDB, hasOut, hasPeriod bool
	formats                  []string
}

// newCommand starts the flags of command name, printing its usage to w:
// the command's line of the program's usage text, then its flags.
func newCommand(name string, w io.Writer) *cmdFlags {
	synopsis := strings.TrimSpace(strings.TrimPrefix(commandUsage(name), "usage: polypledger "+name))
	return &cmdFlags{FlagSet: newFlags(name, synopsis, w)}
}

// withDB declares the required --db (default $POLYPLEDGER_DB); help says
// what the database is for ("" for the usual words).
func (c *cmdFlags) withDB(help string) *cmdFlags {
	if help == "" {
		help = dbUsage
	} else {
		help += "; a file, or a postgres:// URL of a unit server (default $POLYPLEDGER_DB)"
	}
	c.StringVar(&c.db, "db", defaultDB(), help)
	c.hasDB = true
	return c
}

// withPeriod declares the required --from and --to, read into from and to.
func (c *cmdFlags) withPeriod() *cmdFlags {
	c.StringVar(&c.fromText, "from", "", "first day of the period (YYYY-MM-DD)")
	c.StringVar(&c.toText, "to", "", "last day of the period (YYYY-MM-DD)")
	c.hasPeriod = true
	return c
}

// withStandard declares --standard.
func (c *cmdFlags) withStandard() *cmdFlags {
	c.StringVar(&c.standard, "standard", "", "standard profile id (default from unit settings)")
	return c
}

// withGuideline declares --guideline.
func (c *cmdFlags) withGuideline() *cmdFlags {
	c.StringVar(&c.guideline, "guideline", "", "usmstf-2020, esge-2020 or bsg-2020 (default from unit settings)")
	return c
}

// withOperator declares --operator, with help saying what it chooses.
func (c *cmdFlags) withOperator(help string) *cmdFlags {
	c.StringVar(&c.operator, "operator", "", help)
	return c
}

// withFormat declares --format, one of values, def when not given.
func (c *cmdFlags) withFormat(def string, values ...string) *cmdFlags {
	c.StringVar(&c.format, "format", def, strings.Join(values, " or "))
	c.formats = values
	return c
}

// withOut declares the required --out, with help saying what is written.
func (c *cmdFlags) withOut(help string) *cmdFlags {
	c.StringVar(&c.out, "out", "", help)
	c.hasOut = true
	return c
}

// withForce declares --force; help "" says the usual.
func (c *cmdFlags) withForce(help string) *cmdFlags {
	if help == "" {
		help = "replace the file if it exists (never a database)"
	}
	c.BoolVar(&c.force, "force", false, help)
	return c
}

// parse reads args (flags may stand before or after positional arguments),
// returns the positional ones and checks the shared flags in one order for
// every command: --db and --out given, the period's dates real and in
// order, --format one of its values.
func (c *cmdFlags) parse(args []string) ([]string, error) {
	pos, err := parse(c.FlagSet, args)
	if err != nil {
		return nil, err
	}
	if c.hasDB {
		if err := need("db", c.db); err != nil {
			return nil, err
		}
	}
	if c.hasOut {
		if err := need("out", c.out); err != nil {
			return nil, err
		}
	}
	if c.hasPeriod {
		if c.from, c.to, err = periodFlags(c.fromText, c.toText); err != nil {
			return nil, err
		}
	}
	if len(c.formats) > 0 && !slices.Contains(c.formats, c.format) {
		return nil, usagef("--format must be %s", strings.Join(c.formats, " or "))
	}
	return pos, nil
}

// parseOnly is parse for a command that takes flags and no other
// arguments.
func (c *cmdFlags) parseOnly(args []string) error {
	pos, err := c.parse(args)
	if err != nil {
		return err
	}
	if len(pos) > 0 {
		return usagef("unexpected argument %q", pos[0])
	}
	return nil
}

// output is where the command writes its --out file, replacing one there
// only with --force and never the --db database.
func (c *cmdFlags) output() workspace.Output { return output(c.out, c.force, c.db) }

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
