// Package workspace opens a unit the way both the command line and the
// desktop app do: the database with the unit key, the shipped and user
// standard profiles, the demo unit, and the one streaming pass that feeds
// the indicator engine. It holds no arithmetic of its own; the figures come
// from report and the records from store.
package workspace

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"polypledger/assets"
	"polypledger/audit"
	"polypledger/demo"
	"polypledger/logbook"
	"polypledger/store"
	"polypledger/surveillance"
)

// OpenStore opens the database at path (creating it whole if it does not
// exist) with StoreOptions.
func OpenStore(ctx context.Context, path string, withKey bool) (*store.Store, error) {
	opt, err := StoreOptions(withKey)
	if err != nil {
		return nil, err
	}
	return store.Open(ctx, path, opt)
}

// StoreOptions are the options every command and the app open a database
// with. withKey loads (or creates) the unit key from the config folder so
// that hospital numbers typed or imported can be pseudonymised. The
// environment variable POLYPLEDGER_BUSY_TIMEOUT (a duration such as
// "250ms" or "30s") sets how long a writer waits for another's lock before
// giving up with store.ErrBusy; the reliability tests use it.
func StoreOptions(withKey bool) (store.Options, error) {
	opt := store.Options{}
	if v := os.Getenv("POLYPLEDGER_BUSY_TIMEOUT"); v != "" {
		d, err := time.ParseDuration(v)
		if err != nil || d <= 0 {
			return opt, fmt.Errorf("POLYPLEDGER_BUSY_TIMEOUT %q is not a duration such as 30s", v)
		}
		opt.BusyTimeout = d
	}
	if withKey {
		key, err := UnitKey()
		if err != nil {
			return opt, err
		}
		opt.Key = key
	}
	return opt, nil
}

// Fill runs fill on the database at path and reports whether this call
// created it. A database that does not exist yet is made by store.Create:
// fill runs on it before it appears at path, so its work is there whole or
// not at all, and a failure leaves no file — nothing is ever deleted at
// path. If another program creates the database first, fill runs again, on
// that one; fill must be able to run twice. The import command and the
// demo go through here.
func Fill(ctx context.Context, path string, withKey bool, fill func(*store.Store) error) (created bool, err error) {
	opt, err := StoreOptions(withKey)
	if err != nil {
		return false, err
	}
	err = store.Create(ctx, path, opt, fill)
	if !errors.Is(err, store.ErrExists) {
		return err == nil, err
	}
	st, err := store.Open(ctx, path, opt)
	if err != nil {
		return false, err
	}
	err = fill(st)
	if cerr := st.Close(); err == nil {
		err = cerr
	}
	return false, err
}

// UnitKey returns the unit key kept in the config folder, creating it on
// first use.
func UnitKey() ([]byte, error) {
	dir, err := store.ConfigDir()
	if err != nil {
		return nil, err
	}
	return store.LoadOrCreateKey(dir)
}

// KeyWarnings says, one sentence each with the command that fixes it,
// whether other users of the computer can open the unit key's folder or
// file (store.KeyPermissionWarnings); none when they cannot.
func KeyWarnings() []string {
	dir, err := store.ConfigDir()
	if err != nil {
		return nil
	}
	return store.KeyPermissionWarnings(dir)
}

// DemoKey is the key the demo uses for its invented hospital numbers, so
// that the same seed always gives the same pseudonyms.
func DemoKey(seed uint64) []byte { return []byte(fmt.Sprintf("polypledger demo key %d", seed)) }

// RecommendFor returns the function the demo uses to fill in the interval an
// endoscopist recorded: the program's own suggestion under guideline g (an
// unknown guideline is read as surveillance.DefaultGuideline).
func RecommendFor(g string) func(c *logbook.Case) logbook.Interval {
	gl, err := surveillance.ParseGuideline(g)
	if err != nil {
		gl = surveillance.DefaultGuideline
	}
	return func(c *logbook.Case) logbook.Interval { return surveillance.Suggest(gl, c).Interval }
}

// CreateDemo fills an empty database with the invented demo unit: its
// roster, settings and n procedures drawn from seed, in one transaction.
// progress, when set, is called every store.ProgressEvery procedures.
func CreateDemo(ctx context.Context, st *store.Store, n int, seed uint64, progress func(done int)) (int, error) {
	settings := store.DefaultSettings
	settings.UnitName = demo.UnitName
	var roster []logbook.RosterEntry
	for _, s := range demo.StaffList() {
		roster = append(roster, s.Entry)
	}
	opt := demo.Options{Procedures: n, Seed: seed, Key: DemoKey(seed), Recommend: RecommendFor(settings.DefaultGuideline)}
	return st.InsertCases(ctx, settings, roster, fmt.Sprintf("invented demo unit, seed %d", seed), func(emit func(*logbook.Case) error) error {
		return demo.Generate(opt, emit)
	}, progress)
}

// LoadProfiles reads the shipped standard profiles and the user's own copies
// from the config folder's "standards" subfolder.
func LoadProfiles() ([]*audit.Profile, error) {
	dir, err := store.ConfigDir()
	if err != nil {
		return nil, err
	}
	return audit.LoadProfiles(assets.Standards, os.DirFS(filepath.Join(dir, "standards")))
}

// ErrUnknownStandard is matched (errors.Is) by the error NewAudit returns
// when the standard asked for is not among the profiles.
var ErrUnknownStandard = errors.New("unknown standard")

// ErrUnknownGuideline is matched (errors.Is) by the error Audit.Guideline
// returns for a guideline the program does not apply.
var ErrUnknownGuideline = errors.New("unknown guideline")

// choiceError is a choice the program does not know; it prints as the
// underlying message and matches its kind with errors.Is.
type choiceError struct {
	kind error
	err  error
}

func (e choiceError) Error() string        { return e.err.Error() }
func (e choiceError) Is(target error) bool { return target == e.kind }
func (e choiceError) Unwrap() error        { return e.err }

// Audit is what the metrics, report and interval work share: the open
// database, its unit settings and the chosen standard profile.
type Audit struct {
	Store    *store.Store
	Settings store.Settings
	Profile  *audit.Profile
}

// NewAudit reads the unit settings of st and picks the profile with id
// standard from profiles (the unit's default standard when standard is "").
func NewAudit(ctx context.Context, st *store.Store, standard string, profiles []*audit.Profile) (*Audit, error) {
	settings, err := st.Settings(ctx)
	if err != nil {
		return nil, err
	}
	if standard == "" {
		standard = settings.DefaultStandard
	}
	p, err := audit.FindProfile(profiles, standard)
	if err != nil {
		return nil, choiceError{ErrUnknownStandard, err}
	}
	return &Audit{Store: st, Settings: settings, Profile: p}, nil
}

// Guideline returns the surveillance guideline named by choice, or the
// unit's default when choice is "" (surveillance.DefaultGuideline when the
// setting names none the program knows).
func (a *Audit) Guideline(choice string) (surveillance.Guideline, error) {
	g := choice
	if g == "" {
		g = a.Settings.DefaultGuideline
	}
	gl, err := surveillance.ParseGuideline(g)
	if err != nil {
		if choice != "" {
			return "", choiceError{ErrUnknownGuideline, err}
		}
		return surveillance.DefaultGuideline, nil
	}
	return gl, nil
}

// Discard returns the unit's resect-and-discard settings.
func (a *Audit) Discard() audit.DiscardSettings {
	return audit.DiscardSettings{MinCases: a.Settings.DiscardMinCases, RuleSet: a.Settings.EligibilityRules}
}
