package safefile

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"
)

// TestMain lets this test binary act as a writer that is killed half-way
// (SAFEFILE_TEST_CHILD names the target): it creates its temporary file,
// writes part of it, says its name and waits to be killed.
func TestMain(m *testing.M) {
	if target := os.Getenv("SAFEFILE_TEST_CHILD"); target != "" {
		f, err := Create(target)
		if err != nil {
			fmt.Println("error:", err)
			os.Exit(1)
		}
		f.WriteString("half of a file")
		fmt.Println(f.Name())
		time.Sleep(time.Minute)
		os.Exit(0)
	}
	os.Exit(m.Run())
}

func TestCreateIsOwnerOnlyFromTheStart(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("file modes do not apply on Windows")
	}
	target := filepath.Join(t.TempDir(), "out.csv")
	f, err := Create(target)
	if err != nil {
		t.Fatal(err)
	}
	defer os.Remove(f.Name())
	defer f.Close()
	fi, err := f.Stat()
	if err != nil {
		t.Fatal(err)
	}
	if fi.Mode().Perm() != 0o600 {
		t.Errorf("temporary file created with mode %v, want 0600", fi.Mode().Perm())
	}
	if !IsTemp(filepath.Base(f.Name())) || filepath.Dir(f.Name()) != filepath.Dir(target) {
		t.Errorf("temporary name %s is not a marked name beside the target", f.Name())
	}
}

// TestPlace: without replace, an existing target is never replaced (and
// the temporary goes); with replace, it is; either way the result is the
// whole new file and no temporary is left.
func TestPlace(t *testing.T) {
	for _, tc := range []struct {
		name     string
		existing bool
		replace  bool
		want     string // the target's content afterwards
		refused  bool
	}{
		{"new target", false, false, "new", false},
		{"existing target kept", true, false, "old", true},
		{"existing target replaced", true, true, "new", false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			target := filepath.Join(dir, "out.csv")
			if tc.existing {
				os.WriteFile(target, []byte("old"), 0o600)
			}
			f, err := Create(target)
			if err != nil {
				t.Fatal(err)
			}
			f.WriteString("new")
			f.Close()
			err = Place(f.Name(), target, tc.replace)
			if tc.refused != errors.Is(err, ErrExists) {
				t.Errorf("Place: %v; refused want %v", err, tc.refused)
			}
			if b, _ := os.ReadFile(target); string(b) != tc.want {
				t.Errorf("target holds %q, want %q", b, tc.want)
			}
			entries, _ := os.ReadDir(dir)
			if len(entries) != 1 {
				t.Errorf("the folder holds %d files, want the target alone", len(entries))
			}
		})
	}
}

// TestKilledWriterLeavesNothingForLong kills a real process half-way
// through writing: its temporary file is left, and the next Create for the
// same target removes it; temporaries of live processes and of other
// computers are kept.
func TestKilledWriterLeavesNothingForLong(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("uses SIGKILL")
	}
	dir := t.TempDir()
	target := filepath.Join(dir, "report.pdf")
	cmd := exec.Command(os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), "SAFEFILE_TEST_CHILD="+target)
	out, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	line, err := bufio.NewReader(out).ReadString('\n')
	if err != nil || strings.HasPrefix(line, "error:") {
		t.Fatalf("child: %q, %v", line, err)
	}
	left := strings.TrimSpace(line)
	cmd.Process.Kill()
	cmd.Wait()
	if _, err := os.Stat(left); err != nil {
		t.Fatalf("the killed writer left no temporary file: %v", err)
	}
	// Temporaries of a running process (this one) and of another computer.
	mine, err := Create(target)
	if err != nil {
		t.Fatal(err)
	}
	mine.Close()
	dead := fmt.Sprint(cmd.Process.Pid)
	other := filepath.Join(dir, tempPrefix(target)+"0badcafe-"+dead+"-abcdef")
	os.WriteFile(other, nil, 0o600)
	// Another target's temporary.
	unrelated := filepath.Join(dir, ".other.pdf"+tempMark+host+"-"+dead+"-abcdef")
	os.WriteFile(unrelated, nil, 0o600)

	next, err := Create(target)
	if err != nil {
		t.Fatal(err)
	}
	next.Close()
	if _, err := os.Stat(left); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the killed run's temporary %s is still there", left)
	}
	for _, keep := range []string{mine.Name(), other, unrelated, next.Name()} {
		if _, err := os.Stat(keep); err != nil {
			t.Errorf("%s was removed: %v", filepath.Base(keep), err)
		}
	}
}
