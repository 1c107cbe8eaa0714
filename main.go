// Command polypledger is a colonoscopy logbook and quality-audit reporter.
// With no arguments it opens the desktop app on the default database; with a
// first word it runs that command (see usage).
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"runtime/debug"
	"strings"
	"syscall"

	_ "polypledger/internal/plainlocale" // before the UI toolkit reads the locale

	"polypledger/app"
	"polypledger/store"
)

const usageText = `usage: polypledger [COMMAND [FLAGS]]
With no command, opens the desktop app on the default database.
Commands:
  demo      --db PATH [--procedures N] [--seed S]        create an invented demo unit
  import    --db PATH --kind procedures|lesions|histology|--recipe R.toml [--sheet NAME] [--update] [--check] FILE.csv|FILE.xlsx
  export    --db PATH --kind procedures|lesions|histology|all --out FILE.csv|FILE.xlsx [--force]
  recipe    draft FILE.csv|FILE.xlsx [--sheet NAME] [--out R.toml] [--force]   propose an import recipe
  metrics   --db PATH --from DATE --to DATE [--standard ID] [--operator ID] [--format json|table]
  interval  --db PATH [--procedure ID] [--guideline G] [--format json|text]
  report    --db PATH --from DATE --to DATE [--standard ID] [--operator ID | --trainee ID] --out FILE.pdf [--force]
  check     --db PATH                                     integrity check
  backup    --db PATH --out FILE [--force]                consistent copy while in use
  init      --db PATH                                     create (or upgrade) an empty unit database
  move      --from PATH --to PATH                         copy a unit between a file and a server
  version                                                 program and schema version
PATH is a database file or a unit server's postgres://ROLE@HOST/DATABASE URL;
$POLYPLEDGER_DB, when set, is the default --db.
Run "polypledger COMMAND -h" for a command's flags.`

// exit codes (architecture.md): 0 success, 1 bad input, 2 usage error.
const (
	exitOK    = 0
	exitBad   = 1
	exitUsage = 2
)

// usageError is a mistake in the command line itself. shown is set when
// the flag package has already printed the command's usage.
type usageError struct {
	msg   string
	shown bool
}

func (e usageError) Error() string { return e.msg }

func usagef(format string, args ...any) error { return usageError{msg: fmt.Sprintf(format, args...)} }

// commandUsage returns the usage line of one command, taken from its line
// in usageText: the command's synopsis (the words up to the run of spaces
// before its description, if they are flags or arguments at all).
func commandUsage(name string) string {
	for _, line := range strings.Split(usageText, "\n") {
		rest, ok := strings.CutPrefix(line, "  "+name+" ")
		if !ok {
			continue
		}
		rest = strings.TrimSpace(rest)
		if i := strings.Index(rest, "   "); i >= 0 {
			rest = rest[:i]
		}
		if !strings.HasPrefix(rest, "-") && !strings.HasPrefix(rest, "[") && !strings.Contains(rest, " [--") {
			rest = ""
		}
		return strings.TrimSpace("usage: polypledger " + name + " " + rest)
	}
	return "usage: polypledger " + name
}

// command runs one subcommand with its arguments.
type command func(ctx context.Context, env *env, args []string) error

// env is what a command may touch: its output streams and the clock-free
// environment; tests supply their own.
type env struct {
	stdout, stderr io.Writer
}

var commands = map[string]command{
	"demo":     cmdDemo,
	"import":   cmdImport,
	"export":   cmdExport,
	"check":    cmdCheck,
	"backup":   cmdBackup,
	"version":  cmdVersion,
	"metrics":  cmdMetrics,
	"interval": cmdInterval,
	"report":   cmdReport,
	"recipe":   cmdRecipe,
	"init":     cmdInit,
	"move":     cmdMove,
}

func main() {
	if len(os.Args) > 1 {
		// Batch commands stream whole logbooks through short-lived buffers;
		// collecting garbage less often trades a little memory for speed.
		debug.SetGCPercent(400)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := run(ctx, os.Args[1:], &env{stdout: os.Stdout, stderr: os.Stderr})
	stop()
	os.Exit(code)
}

// run dispatches and maps errors to exit codes; no panic escapes it.
func run(ctx context.Context, args []string, e *env) (code int) {
	defer func() {
		if r := recover(); r != nil {
			fmt.Fprintf(e.stderr, "polypledger: internal error: %v\nNothing further was stored; please report this.\n", r)
			code = exitBad
		}
	}()
	if len(args) == 0 {
		return runApp(e, "")
	}
	name := args[0]
	if name == "-h" || name == "--help" || name == "help" {
		fmt.Fprintln(e.stdout, usageText)
		return exitOK
	}
	if name == "--db" && len(args) == 2 {
		return runApp(e, args[1])
	}
	cmd, ok := commands[name]
	if !ok {
		fmt.Fprintf(e.stderr, "polypledger: unknown command %q\n%s\n", name, usageText)
		return exitUsage
	}
	err := cmd(ctx, e, args[1:])
	var ue usageError
	var refused *store.ImportError
	switch {
	case err == nil:
		return exitOK
	case errors.Is(err, errHelp):
		return exitOK
	case errors.As(err, &ue):
		fmt.Fprintf(e.stderr, "polypledger %s: %s\n", name, ue.msg)
		if !ue.shown {
			fmt.Fprintln(e.stderr, commandUsage(name))
		}
		return exitUsage
	case errors.As(err, &refused):
		// Every line names the file: FILE:LINE: column: reason.
		fmt.Fprintln(e.stderr, refused.Error())
		return exitBad
	default:
		fmt.Fprintf(e.stderr, "polypledger %s: %v\n", name, err)
		return exitBad
	}
}

func runApp(e *env, dbPath string) int {
	if dbPath == "" {
		dbPath = defaultDB()
	}
	if dbPath == "" {
		p, err := store.DefaultDBPath()
		if err != nil {
			fmt.Fprintln(e.stderr, "polypledger:", err)
			return exitBad
		}
		dbPath = p
	}
	if err := app.Run(dbPath); err != nil {
		fmt.Fprintln(e.stderr, "polypledger:", err)
		return exitBad
	}
	return exitOK
}
