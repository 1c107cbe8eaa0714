package main

import (
	"strings"
	"testing"
)

// flagHelp returns the help line of each flag a command prints for -h.
func flagHelp(t *testing.T, command string) map[string]string {
	t.Helper()
	code, _, stderr := cli(t, command, "-h")
	if code != exitOK {
		t.Fatalf("%s -h: exit %d", command, code)
	}
	help := map[string]string{}
	lines := strings.Split(stderr, "\n")
	for i := 0; i+1 < len(lines); i++ {
		if name, ok := strings.CutPrefix(strings.TrimSpace(lines[i]), "-"); ok {
			name, _, _ = strings.Cut(name, " ")
			help[name] = strings.TrimSpace(lines[i+1])
		}
	}
	return help
}

// TestSharedFlagsReadTheSame checks that the flags several commands share
// are the same flag everywhere: one help text and one default, as the flag
// builder declares them.
func TestSharedFlagsReadTheSame(t *testing.T) {
	help := map[string]map[string]string{}
	for _, c := range []string{"metrics", "report", "interval", "export", "backup", "check"} {
		help[c] = flagHelp(t, c)
	}
	for _, same := range []struct {
		flag     string
		commands []string
	}{
		{"db", []string{"metrics", "report", "interval", "export", "backup", "check"}},
		{"from", []string{"metrics", "report"}},
		{"to", []string{"metrics", "report"}},
		{"standard", []string{"metrics", "report"}},
		{"force", []string{"report", "export"}},
	} {
		first := help[same.commands[0]][same.flag]
		if first == "" {
			t.Errorf("%s has no --%s", same.commands[0], same.flag)
		}
		for _, c := range same.commands[1:] {
			if got := help[c][same.flag]; got != first {
				t.Errorf("--%s reads %q in %s but %q in %s", same.flag, got, c, first, same.commands[0])
			}
		}
	}
	// A value the flag does not take is refused the same way by each
	// command that has it.
	for _, c := range []struct {
		args   []string
		values string
	}{
		{[]string{"metrics", "--db", "x.db", "--from", "2025-01-01", "--to", "2025-12-31", "--format", "xml"}, "json or table"},
		{[]string{"interval", "--db", "x.db", "--format", "xml"}, "json or text"},
	} {
		code, _, stderr := cli(t, c.args...)
		if code != exitUsage || !strings.Contains(stderr, "--format must be "+c.values) {
			t.Errorf("%s --format xml: exit %d, %q", c.args[0], code, stderr)
		}
	}
}
