package store_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"fmt"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"polypledger/demo"
	"polypledger/logbook"
	"polypledger/store"
)

// benchImportSize is how many procedures the import benchmarks import.
const benchImportSize = 20_000

// benchFiles are the procedures.csv and lesions.csv of an invented unit of
// benchImportSize procedures, made once: the demo unit exported, with a
// clear (invented) hospital number in place of each pseudonym so that the
// import pseudonymises every row as it does a unit's own files.
var benchFiles struct {
	once              sync.Once
	procs, lesions    []byte
	nProcs, nLesions  int
	err               error
	procRecs, lesRecs [][]string
}

func importBenchFiles(b *testing.B) (procs, lesions []byte) {
	b.Helper()
	f := &benchFiles
	f.once.Do(func() { f.err = makeBenchFiles(b.TempDir()) })
	if f.err != nil {
		b.Fatal(f.err)
	}
	return f.procs, f.lesions
}

func makeBenchFiles(dir string) error {
	ctx := context.Background()
	s, err := store.Open(ctx, dir+"/source.db", store.Options{Key: unitKey, Now: func() time.Time { return today }, User: "bench"})
	if err != nil {
		return err
	}
	defer s.Close()
	var roster []logbook.RosterEntry
	for _, st := range demo.StaffList() {
		roster = append(roster, st.Entry)
	}
	_, err = s.InsertCases(ctx, store.Settings{}, roster, "import benchmark", func(emit func(*logbook.Case) error) error {
		return demo.Generate(demo.Options{Procedures: benchImportSize, Seed: 7, Key: unitKey}, emit)
	}, nil)
	if err != nil {
		return err
	}
	var pb, lb bytes.Buffer
	if _, err := s.Export(ctx, store.Procedures, &pb); err != nil {
		return err
	}
	if _, err := s.Export(ctx, store.Lesions, &lb); err != nil {
		return err
	}
	// Clear hospital numbers in place of the exported pseudonyms.
	recs, err := csv.NewReader(&pb).ReadAll()
	if err != nil {
		return err
	}
	ref := -1
	for i, c := range recs[0] {
		if c == "patient_ref" {
			ref = i
		}
	}
	for i, r := range recs[1:] {
		r[ref] = fmt.Sprintf("BH%07d", i%(benchImportSize/2)) // patients come back
	}
	var out bytes.Buffer
	w := csv.NewWriter(&out)
	if err := w.WriteAll(recs); err != nil {
		return err
	}
	lrecs, err := csv.NewReader(bytes.NewReader(lb.Bytes())).ReadAll()
	if err != nil {
		return err
	}
	benchFiles.procs, benchFiles.lesions = out.Bytes(), lb.Bytes()
	benchFiles.nProcs, benchFiles.nLesions = len(recs)-1, len(lrecs)-1
	benchFiles.procRecs, benchFiles.lesRecs = recs[1:], lrecs[1:]
	return nil
}

// BenchmarkImport imports benchImportSize procedures and their lesions
// into an empty logbook on each backend: as CSV files (procedures.csv,
// then lesions.csv: two imports) and as one feed of records (the path of
// import recipes and workbooks). Each iteration starts from a new database;
// only the imports are timed. The histology benchmarks import the
// pathology results of the same unit, one histology.csv of about as many
// results as procedures, into the unit loaded with those lesions awaiting
// them.
func BenchmarkImport(b *testing.B) {
	procs, lesions := importBenchFiles(b)
	ctx := context.Background()
	for _, be := range store.Backends {
		b.Run(be.Name+"/histology", func(b *testing.B) {
			var results int
			for b.Loop() {
				b.StopTimer()
				s, err := store.Open(ctx, be.NewDB(b), store.Options{Key: unitKey, Now: func() time.Time { return today }, User: "bench"})
				if err != nil {
					b.Fatal(err)
				}
				text, n, err := loadAwaitingResults(ctx, s)
				if err != nil {
					b.Fatal(err)
				}
				b.StartTimer()
				res, err := s.Import(ctx, store.Histology, "histology.csv", bytes.NewReader(text), store.ImportOptions{})
				if err != nil {
					b.Fatal(err)
				}
				b.StopTimer()
				if res.Rows != n || res.Kinds[store.Histology].New != n {
					b.Fatalf("imported %d rows, %d results, want %d", res.Rows, res.Kinds[store.Histology].New, n)
				}
				results = n
				s.Close()
				b.StartTimer()
			}
			b.ReportMetric(float64(b.Elapsed().Microseconds())/float64(b.N)/float64(results), "µs/result")
		})
		for _, path := range []string{"csv", "feed"} {
			b.Run(be.Name+"/"+path, func(b *testing.B) {
				for b.Loop() {
					b.StopTimer()
					s, err := store.Open(ctx, be.NewDB(b), store.Options{Key: unitKey, Now: func() time.Time { return today }, User: "bench"})
					if err != nil {
						b.Fatal(err)
					}
					b.StartTimer()
					var n int
					if path == "csv" {
						for _, f := range []struct {
							kind store.Kind
							text []byte
						}{{store.Procedures, procs}, {store.Lesions, lesions}} {
							res, err := s.Import(ctx, f.kind, string(f.kind)+".csv", bytes.NewReader(f.text), store.ImportOptions{})
							if err != nil {
								b.Fatal(err)
							}
							n += res.Rows
						}
					} else {
						res, err := s.ImportRecords(ctx, "unit.xlsx", benchFeed, store.ImportOptions{})
						if err != nil {
							b.Fatal(err)
						}
						n = res.Rows
					}
					b.StopTimer()
					if want := benchFiles.nProcs + benchFiles.nLesions; n != want {
						b.Fatalf("imported %d rows, want %d", n, want)
					}
					s.Close()
					b.StartTimer()
				}
				b.ReportMetric(float64(b.Elapsed().Microseconds())/float64(b.N)/float64(benchFiles.nProcs), "µs/procedure")
			})
		}
	}
}

// benchFeed hands over the benchmark's procedures, each followed by its
// lesions, as a workbook's feed does.
func benchFeed(emit func(store.Record) error, _ func(store.RowError)) error {
	les := benchFiles.lesRecs
	line := 1
	for _, p := range benchFiles.procRecs {
		line++
		if err := emit(store.Record{Kind: store.Procedures, Line: line, Values: p}); err != nil {
			return err
		}
		for len(les) > 0 && les[0][0] == p[0] {
			line++
			if err := emit(store.Record{Kind: store.Lesions, Line: line, Values: les[0]}); err != nil {
				return err
			}
			les = les[1:]
		}
	}
	if len(les) > 0 {
		return fmt.Errorf("%d lesions without their procedure in the feed (first %s)", len(les), strings.Join(les[0], ","))
	}
	return nil
}

// loadAwaitingResults stores the benchmark's demo unit of benchImportSize
// procedures with every lesion that has a reported result awaiting it
// (histology pending, no dysplasia, no report date), and returns those
// results as a histology.csv and how many it holds.
func loadAwaitingResults(ctx context.Context, s *store.Store) ([]byte, int, error) {
	var roster []logbook.RosterEntry
	for _, st := range demo.StaffList() {
		roster = append(roster, st.Entry)
	}
	var out bytes.Buffer
	w := csv.NewWriter(&out)
	if err := w.Write(store.Columns(store.Histology)); err != nil {
		return nil, 0, err
	}
	n := 0
	_, err := s.InsertCases(ctx, store.Settings{}, roster, "histology benchmark", func(emit func(*logbook.Case) error) error {
		return demo.Generate(demo.Options{Procedures: benchImportSize, Seed: 7, Key: unitKey}, func(c *logbook.Case) error {
			for i := range c.Lesions {
				l := &c.Lesions[i]
				if !l.Histology.IsFinal() || l.ReportedOn.IsZero() {
					continue
				}
				if err := w.Write([]string{l.ProcedureID, strconv.Itoa(l.LesionNo), string(l.Histology), string(l.Dysplasia), logbook.FormatDate(l.ReportedOn)}); err != nil {
					return err
				}
				n++
				l.Histology, l.Dysplasia, l.ReportedOn = logbook.HistPending, "", time.Time{}
			}
			return emit(c)
		})
	}, nil)
	w.Flush()
	return out.Bytes(), n, err
}
