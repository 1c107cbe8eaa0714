package workspace

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"unicode"

	"polypledger/logbook"
	"polypledger/recipe"
	"polypledger/sheet"
	"polypledger/store"
)

// ImportRequest says which file to import and how. The import command and
// the app's import screen both make one, so that a file is read the same
// way from either.
type ImportRequest struct {
	// Path is the data file: a workbook when its name ends in .xlsx, CSV
	// otherwise. Messages name it as given.
	Path string
	// Kind is the kind of records of a file of ours. A workbook of ours
	// without a Kind is read sheet by sheet: every sheet named after a kind
	// ("procedures", "lesions", "histology", as an export of every kind
	// names them), in the order they are stored. With a Recipe it is left
	// empty: the recipe names the kinds.
	Kind store.Kind
	// Recipe maps another system's file onto our records; nil for a file
	// of ours.
	Recipe *recipe.Recipe
	// Sheet names the workbook sheet to read, over the recipe's.
	Sheet string
	// Update lets records replace ones already stored; Check stores
	// nothing (store.ImportOptions).
	Update, Check bool
	// Progress, when set, is called now and then with the rows read so far
	// and the part of the file read (0–1; below 0 when not known).
	Progress func(rows int, fraction float64)
}

// ImportReport says what an import stored, or with Check would store.
type ImportReport struct {
	store.ImportResult
	// Unused lists, once, the source's columns that the recipe does not
	// mention: they are not read.
	Unused []string
	// Warnings are the recipe's parts that do nothing.
	Warnings []string
}

// ImportFile imports one file into st, all or nothing (or, with Check,
// checks it and stores nothing), as req says. A refusal is a
// *store.ImportError listing every problem as FILE:LINE: column: reason,
// the file's own lines and columns, and for a recipe what to add to it;
// its Rows are the file's rows.
func ImportFile(ctx context.Context, st *store.Store, req ImportRequest) (ImportReport, error) {
	opt := store.ImportOptions{Update: req.Update, Check: req.Check}
	if req.Recipe != nil {
		return importThroughRecipe(ctx, st, req, opt)
	}
	if sheet.FormatOf(req.Path) == sheet.XLSX {
		return importWorkbook(ctx, st, req, opt)
	}
	if _, err := store.ParseKind(string(req.Kind)); err != nil {
		return ImportReport{}, err
	}
	f, size, err := openData(req.Path)
	if err != nil {
		return ImportReport{}, err
	}
	defer f.Close()
	if req.Progress != nil {
		opt.Progress = func(rows int, read int64) { req.Progress(rows, fraction(read, size)) }
	}
	res, err := st.Import(ctx, req.Kind, req.Path, f, opt)
	return ImportReport{ImportResult: res}, err
}

// openData opens a data file and returns its size.
func openData(path string) (*os.File, int64, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, 0, fmt.Errorf("cannot open %s: %w", path, err)
	}
	fi, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, 0, fmt.Errorf("cannot read %s: %w", path, err)
	}
	if fi.IsDir() {
		f.Close()
		return nil, 0, fmt.Errorf("%s is a folder, not a file", path)
	}
	return f, fi.Size(), nil
}

func fraction(read, size int64) float64 {
	if size <= 0 {
		return -1
	}
	return float64(min(read, size)) / float64(size)
}

// countingReader counts the bytes read through it.
type countingReader struct {
	r io.Reader
	n int64
}

func (c *countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += int64(n)
	return n, err
}

// openTable opens a data file as a table: a CSV file streamed (read counts
// the bytes read so far), a workbook read whole (read is then nil). The
// caller calls done when it has finished with the table.
func openTable(path string, opt sheet.Options) (t *sheet.Table, read func() int64, size int64, done func(), err error) {
	f, size, err := openData(path)
	if err != nil {
		return nil, nil, 0, nil, err
	}
	var r io.Reader = f
	if sheet.FormatOf(path) == sheet.CSV {
		c := &countingReader{r: f}
		r, read = c, func() int64 { return c.n }
	}
	t, err = sheet.Open(path, r, opt)
	if err != nil {
		f.Close()
		return nil, nil, 0, nil, err
	}
	return t, read, size, func() { t.Close(); f.Close() }, nil
}

// importThroughRecipe maps another system's file through a recipe and
// stores its records in one transaction.
func importThroughRecipe(ctx context.Context, st *store.Store, req ImportRequest, opt store.ImportOptions) (ImportReport, error) {
	rcp := req.Recipe
	sopt := rcp.Options()
	if req.Sheet != "" {
		sopt.Sheet = req.Sheet
	}
	t, read, size, done, err := openTable(req.Path, sopt)
	if err != nil {
		return ImportReport{}, err
	}
	defer done()
	rep := ImportReport{Warnings: rcp.Warnings}
	var mapped *recipe.Result
	origins := map[*recipe.Origin]*store.Origin{}
	feed := func(emit func(store.Record) error, refuse func(store.RowError)) error {
		next := progressEvery
		res, err := rcp.Map(t, func(r recipe.Record) error {
			if req.Progress != nil && r.Line >= next {
				next = r.Line + progressEvery
				f := -1.0
				if read != nil {
					f = fraction(read(), size)
				}
				req.Progress(r.Line, f)
			}
			return emit(store.Record{Kind: r.Kind, Line: r.Line, Values: r.Values, Origin: storeOrigin(origins, r.Origin, rcp.File)})
		})
		mapped = res
		if res != nil {
			for _, p := range res.Problems {
				refuse(store.RowError{File: p.File, Line: p.Line, Column: p.Column, Reason: p.Reason})
			}
			for range res.More {
				refuse(store.RowError{File: res.File}) // beyond the list: counted only
			}
		}
		return err
	}
	res, err := st.ImportRecords(ctx, t.Label(), feed, opt)
	if mapped != nil {
		rep.Unused = mapped.Unused
		res.Rows = mapped.Rows
		var ie *store.ImportError
		if errors.As(err, &ie) {
			ie.Rows = mapped.Rows
		}
	}
	rep.ImportResult = res
	return rep, err
}

// storeOrigin gives the store the names of a mapped file's columns, once
// for each kind of record the mapping makes.
func storeOrigin(cache map[*recipe.Origin]*store.Origin, o *recipe.Origin, recipeFile string) *store.Origin {
	if so, ok := cache[o]; ok {
		return so
	}
	so := &store.Origin{File: o.File, Columns: o.Labels(), Absent: o.Missing()}
	so.AbsentHint = func(column string) string {
		return fmt.Sprintf("map one of its columns to %s in the recipe %s ([columns] %s = \"…\")", column, recipeFile, column)
	}
	cache[o] = so
	return so
}

// importWorkbook imports a workbook of ours: the sheet of req.Kind, or
// every sheet named after a kind.
func importWorkbook(ctx context.Context, st *store.Store, req ImportRequest, opt store.ImportOptions) (ImportReport, error) {
	f, size, err := openData(req.Path)
	if err != nil {
		return ImportReport{}, err
	}
	limit := sheet.DefaultLimits.WorkbookBytes
	if size > limit {
		f.Close()
		return ImportReport{}, fmt.Errorf("%s is larger than %d bytes, more than a workbook this program reads", req.Path, limit)
	}
	data, err := io.ReadAll(f)
	f.Close()
	if err != nil {
		return ImportReport{}, fmt.Errorf("cannot read %s: %w", req.Path, err)
	}
	open := func(name string) (*sheet.Table, error) {
		return sheet.Open(req.Path, bytes.NewReader(data), sheet.Options{Sheet: name})
	}
	first, err := open(req.Sheet)
	if err != nil {
		return ImportReport{}, err
	}
	names := first.Sheets()
	first.Close()
	type part struct {
		kind  store.Kind
		sheet string
	}
	var parts []part
	switch {
	case req.Kind != "":
		if _, err := store.ParseKind(string(req.Kind)); err != nil {
			return ImportReport{}, err
		}
		name := req.Sheet
		if name == "" && slices.Contains(names, string(req.Kind)) {
			name = string(req.Kind) // a workbook of every kind: that kind's sheet
		}
		parts = append(parts, part{req.Kind, name})
	case req.Sheet != "":
		k, err := store.ParseKind(req.Sheet)
		if err != nil {
			return ImportReport{}, fmt.Errorf("%s: say which kind of records sheet %q holds (procedures, lesions or histology)", req.Path, req.Sheet)
		}
		parts = append(parts, part{k, req.Sheet})
	default:
		for _, k := range logbook.Kinds {
			if slices.Contains(names, string(k)) {
				parts = append(parts, part{k, string(k)})
			}
		}
		if len(parts) == 0 {
			return ImportReport{}, fmt.Errorf("%s has no sheet named procedures, lesions or histology (its sheets: %s); say which kind of records it holds", req.Path, quoted(names))
		}
	}
	rows := 0
	feed := func(emit func(store.Record) error, refuse func(store.RowError)) error {
		for _, p := range parts {
			t, err := open(p.sheet)
			if err != nil {
				var se *sheet.Error
				if errors.As(err, &se) {
					refuse(store.RowError{File: se.File, Line: se.Line, Column: "sheet", Reason: se.Reason})
					continue
				}
				return err
			}
			err = store.SheetFeed(p.kind, t)(func(r store.Record) error {
				if rows++; req.Progress != nil && rows%progressEvery == 0 {
					req.Progress(rows, -1)
				}
				return emit(r)
			}, refuse)
			t.Close()
			if err != nil {
				return err
			}
		}
		return nil
	}
	res, err := st.ImportRecords(ctx, req.Path, feed, opt)
	return ImportReport{ImportResult: res}, err
}

func quoted(names []string) string {
	var b bytes.Buffer
	for i, n := range names {
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%q", n)
	}
	return b.String()
}

// CheckIn runs fn on the database at path when it exists; otherwise on an
// empty database made for the purpose in a private temporary folder and
// removed with it afterwards, so that a file can be checked for a unit that
// has no database yet without making one at path.
func CheckIn(ctx context.Context, path string, fn func(*store.Store) error) error {
	if _, err := os.Stat(path); !store.IsServerURL(path) && errors.Is(err, os.ErrNotExist) {
		dir, err := os.MkdirTemp("", "polypledger-check-")
		if err != nil {
			return err
		}
		defer os.RemoveAll(dir)
		path = filepath.Join(dir, "check.db")
	}
	st, err := OpenStore(ctx, path, true)
	if err != nil {
		return err
	}
	err = fn(st)
	if cerr := st.Close(); err == nil {
		err = cerr
	}
	return err
}

// OwnKind reports which kind of our own files a header is: the kind whose
// header check (store.CheckHeader) finds nothing wrong. A file of ours is
// imported directly, without a recipe.
func OwnKind(header []string) (store.Kind, bool) {
	for _, k := range logbook.Kinds {
		if _, _, problems, ok := store.CheckHeader(k, "", 1, header); ok && len(problems) == 0 {
			return k, true
		}
	}
	return "", false
}

// RecipeDir returns the folder of named import recipes: "recipes" in the
// configuration folder. The app saves there the recipes made on its import
// screen, and offers one again for a file with the same columns.
func RecipeDir() (string, error) {
	dir, err := store.ConfigDir()
	if err != nil {
		return "", err
	}
	return filepath.Join(dir, "recipes"), nil
}

// SavedRecipe is a recipe kept in RecipeDir.
type SavedRecipe struct {
	Path   string
	Recipe *recipe.Recipe
}

// SavedRecipes loads every recipe in RecipeDir, by file name. A file that
// does not load is left out and its problem returned with the others.
func SavedRecipes() ([]SavedRecipe, error) {
	dir, err := RecipeDir()
	if err != nil {
		return nil, err
	}
	paths, err := filepath.Glob(filepath.Join(dir, "*.toml"))
	if err != nil {
		return nil, err
	}
	var out []SavedRecipe
	var errs []error
	for _, p := range paths {
		r, err := recipe.Load(p)
		if err != nil {
			errs = append(errs, err)
			continue
		}
		out = append(out, SavedRecipe{Path: p, Recipe: r})
	}
	return out, errors.Join(errs...)
}

// RecipeFor returns the saved recipe that fits a data file — every column
// it reads is in the file's header, read with the recipe's own sheet and
// header row (sheetName, when set, for the sheet) — preferring the one that
// reads most of the file's columns; ok is false when none fits.
func RecipeFor(path, sheetName string) (SavedRecipe, bool) {
	saved, _ := SavedRecipes() // a recipe that does not load fits nothing
	var best SavedRecipe
	found, bestRead := false, 0
	for _, s := range saved {
		opt := s.Recipe.Options()
		if sheetName != "" {
			opt.Sheet = sheetName
		}
		t, _, _, done, err := openTable(path, opt)
		if err != nil {
			continue
		}
		header := t.Header()
		done()
		if len(s.Recipe.Missing(header)) > 0 {
			continue
		}
		read := map[string]bool{}
		for _, h := range s.Recipe.Columns {
			read[recipe.Fold(h)] = true
		}
		n := 0
		for _, h := range header {
			if read[recipe.Fold(h)] {
				n++
			}
		}
		if !found || n > bestRead {
			best, found, bestRead = s, true, n
		}
	}
	return best, found
}

// RecipeFileName returns the file a recipe named name is saved as in
// RecipeDir: its letters and digits in lower case, other runs of
// characters made one hyphen.
func RecipeFileName(name string) string {
	var b []rune
	for _, r := range strings.ToLower(strings.TrimSpace(name)) {
		switch {
		case unicode.IsLetter(r) || unicode.IsDigit(r):
			b = append(b, r)
		case len(b) > 0 && b[len(b)-1] != '-':
			b = append(b, '-')
		}
	}
	s := strings.Trim(string(b), "-")
	if s == "" {
		s = "recipe"
	}
	return s + ".toml"
}

// SaveRecipe writes a recipe to RecipeDir under its name (RecipeFileName),
// whole or not at all; a recipe of the same name is replaced only when
// replace is set. It returns the file written.
func SaveRecipe(r *recipe.Recipe, replace bool) (string, error) {
	dir, err := RecipeDir()
	if err != nil {
		return "", err
	}
	if err := os.MkdirAll(dir, 0o700); err != nil {
		return "", fmt.Errorf("cannot make the recipe folder %s: %w", dir, err)
	}
	path := filepath.Join(dir, RecipeFileName(r.Name))
	err = Output{Path: path, Replace: replace}.Write(func(w io.Writer) error {
		_, err := io.WriteString(w, r.Text())
		return err
	})
	return path, err
}
