// Package pgtest starts a private, throwaway PostgreSQL cluster for tests:
// initdb and pg_ctl from the machine's PostgreSQL server binaries, a data
// folder in a fresh temporary folder, and a Unix socket in that folder (no
// TCP port, so parallel test binaries never collide). PostgreSQL refuses to
// run as root, so when the tests run as root the server runs as an
// unprivileged user: "postgres" where the Debian package made it, otherwise
// a system user this package creates once ("polypledger-pg").
//
// It imports nothing of the project and only the PostgreSQL driver; tests
// that need a server call Start (once per test binary, from TestMain, is
// cheapest: initdb takes about a second) and then NewDatabase per test.
// Where no server binaries exist, Start returns ErrNoServer and the tests
// skip, saying so.
package pgtest

import (
	"context"
	"errors"
	"fmt"
	"net/url"
	"os"
	"os/exec"
	"os/user"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/jackc/pgx/v5"
)

// ErrNoServer means no PostgreSQL server binaries were found; tests that
// need a server skip with its message.
var ErrNoServer = errors.New("no PostgreSQL server binaries (initdb, pg_ctl) found in /usr/lib/postgresql/*/bin or on PATH; install Debian's postgresql package to run the server tests")

// Cluster is one running private server.
type Cluster struct {
	// Dir holds everything: the data folder (Dir/data), the socket and the
	// server log (Dir/server.log).
	Dir string
	// Bin is the folder of the server binaries used.
	Bin string
	// Superuser is the cluster's superuser role (the OS user it runs as).
	Superuser string

	// Port is the server's port: its TCP port when it listens on one, and
	// in any case the number in its socket's name (5432 unless set).
	Port int

	uid, gid int // the OS user the server runs as; -1 when not switching
	seq      atomic.Int64
}

// Options adjust a cluster.
type Options struct {
	// Settings are extra postgresql.conf lines, e.g. "log_statement = 'all'".
	Settings []string
	// Port, when set, is the server's port (with a listen_addresses
	// setting, its TCP port); URL carries it.
	Port int
}

// FindBin returns the folder of the newest PostgreSQL server binaries.
func FindBin() (string, error) {
	dirs, _ := filepath.Glob("/usr/lib/postgresql/*/bin")
	sort.Slice(dirs, func(i, j int) bool { return version(dirs[i]) > version(dirs[j]) })
	for _, d := range dirs {
		if isExec(filepath.Join(d, "initdb")) && isExec(filepath.Join(d, "pg_ctl")) {
			return d, nil
		}
	}
	if p, err := exec.LookPath("pg_ctl"); err == nil {
		d := filepath.Dir(p)
		if isExec(filepath.Join(d, "initdb")) {
			return d, nil
		}
	}
	return "", ErrNoServer
}

func version(dir string) int {
	n, _ := strconv.Atoi(filepath.Base(filepath.Dir(dir)))
	return n
}

func isExec(p string) bool {
	fi, err := os.Stat(p)
	return err == nil && !fi.IsDir() && fi.Mode()&0o111 != 0
}

// Start makes and starts a new cluster. Call Stop when done.
func Start(opt Options) (*Cluster, error) {
	bin, err := FindBin()
	if err != nil {
		return nil, err
	}
	c := &Cluster{Bin: bin, uid: -1, gid: -1, Port: 5432}
	if opt.Port > 0 {
		c.Port = opt.Port
	}
	if os.Geteuid() == 0 {
		u, err := serverUser()
		if err != nil {
			return nil, err
		}
		c.uid, c.gid, c.Superuser = u.uid, u.gid, u.name
	} else {
		cur, err := user.Current()
		if err != nil {
			return nil, fmt.Errorf("pgtest: who am I: %w", err)
		}
		c.Superuser = cur.Username
	}
	// A short folder name: a Unix socket path must stay under about 100 bytes.
	dir, err := os.MkdirTemp("", "pgt")
	if err != nil {
		return nil, err
	}
	c.Dir = dir
	if c.uid >= 0 {
		if err := os.Chown(dir, c.uid, c.gid); err != nil {
			os.RemoveAll(dir)
			return nil, err
		}
	}
	if out, err := c.run("initdb", "-D", c.DataDir(), "-U", c.Superuser, "--auth=trust",
		"--no-sync", "--encoding=UTF8", "--locale=C"); err != nil {
		os.RemoveAll(dir)
		return nil, fmt.Errorf("pgtest: initdb: %v\n%s", err, out)
	}
	conf := append([]string{
		"listen_addresses = ''",
		"unix_socket_directories = '" + dir + "'",
		"fsync = off", "full_page_writes = off", // the machine does not crash in a test; the server may (StopServer)
		"max_connections = 60",
		"shared_buffers = '64MB'",
		fmt.Sprintf("port = %d", c.Port),
	}, opt.Settings...)
	f, err := os.OpenFile(filepath.Join(c.DataDir(), "postgresql.conf"), os.O_APPEND|os.O_WRONLY, 0)
	if err == nil {
		_, err = f.WriteString("\n" + strings.Join(conf, "\n") + "\n")
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}
	if err != nil {
		os.RemoveAll(dir)
		return nil, fmt.Errorf("pgtest: writing postgresql.conf: %w", err)
	}
	if err := c.StartServer(); err != nil {
		os.RemoveAll(dir)
		return nil, err
	}
	return c, nil
}

// DataDir is the cluster's data folder.
func (c *Cluster) DataDir() string { return filepath.Join(c.Dir, "data") }

// LogFile is the server's log.
func (c *Cluster) LogFile() string { return filepath.Join(c.Dir, "server.log") }

// StartServer starts the server of a stopped cluster and waits until it
// accepts connections.
func (c *Cluster) StartServer() error {
	if out, err := c.run("pg_ctl", "-D", c.DataDir(), "-l", c.LogFile(), "-w", "-t", "60", "start"); err != nil {
		log, _ := os.ReadFile(c.LogFile())
		return fmt.Errorf("pgtest: pg_ctl start: %v\n%s\n%s", err, out, log)
	}
	return nil
}

// StopServer stops the server at once (pg_ctl -m immediate: like a crash or
// a power cut of the server, open transactions are lost).
func (c *Cluster) StopServer() error {
	if out, err := c.run("pg_ctl", "-D", c.DataDir(), "-m", "immediate", "-w", "stop"); err != nil {
		return fmt.Errorf("pgtest: pg_ctl stop: %v\n%s", err, out)
	}
	return nil
}

// Stop stops the server and removes the cluster's folder.
func (c *Cluster) Stop() {
	if c == nil {
		return
	}
	_ = c.StopServer()
	os.RemoveAll(c.Dir)
}

// URL returns a connection URL for database db as role (the superuser when
// role is "").
func (c *Cluster) URL(db, role string) string {
	if role == "" {
		role = c.Superuser
	}
	u := url.URL{Scheme: "postgres", User: url.User(role), Path: "/" + db}
	q := url.Values{}
	q.Set("host", c.Dir)
	q.Set("port", strconv.Itoa(c.Port))
	q.Set("sslmode", "disable")
	u.RawQuery = q.Encode()
	return u.String()
}

// Exec runs SQL statements as the superuser in database db ("postgres" for
// cluster-wide statements such as CREATE ROLE).
func (c *Cluster) Exec(ctx context.Context, db string, stmts ...string) error {
	conn, err := pgx.Connect(ctx, c.URL(db, ""))
	if err != nil {
		return err
	}
	defer conn.Close(ctx)
	for _, s := range stmts {
		if _, err := conn.Exec(ctx, s); err != nil {
			return fmt.Errorf("pgtest: %s: %w", s, err)
		}
	}
	return nil
}

// NewDatabase creates an empty database with a fresh name (prefix and a
// sequence number) and returns its name.
func (c *Cluster) NewDatabase(ctx context.Context, prefix string) (string, error) {
	name := fmt.Sprintf("%s_%d_%d", sanitise(prefix), time.Now().UnixNano()%1e6, c.seq.Add(1))
	return name, c.Exec(ctx, "postgres", "CREATE DATABASE "+pgx.Identifier{name}.Sanitize())
}

func sanitise(s string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(s) {
		if r >= 'a' && r <= 'z' || r >= '0' && r <= '9' {
			b.WriteRune(r)
		} else {
			b.WriteByte('_')
		}
		if b.Len() >= 30 {
			break
		}
	}
	if b.Len() == 0 {
		return "db"
	}
	return b.String()
}

// run runs a server binary as the cluster's OS user.
func (c *Cluster) run(name string, args ...string) ([]byte, error) {
	cmd := exec.Command(filepath.Join(c.Bin, name), args...)
	cmd.Dir = c.Dir
	cmd.Env = append(os.Environ(), "LC_ALL=C")
	if c.uid >= 0 {
		cmd.SysProcAttr = &syscall.SysProcAttr{Credential: &syscall.Credential{Uid: uint32(c.uid), Gid: uint32(c.gid)}}
		cmd.Env = append(cmd.Env, "HOME="+c.Dir, "USER="+c.Superuser)
	}
	return cmd.CombinedOutput()
}

type osUser struct {
	name     string
	uid, gid int
}

// serverUser returns the unprivileged OS user that runs the server when the
// tests run as root, creating a system user if neither exists.
func serverUser() (osUser, error) {
	for _, name := range []string{"postgres", "polypledger-pg"} {
		if u, err := lookup(name); err == nil {
			return u, nil
		}
	}
	out, err := exec.Command("useradd", "--system", "--no-create-home", "--shell", "/usr/sbin/nologin", "polypledger-pg").CombinedOutput()
	if err != nil {
		// Another test binary may have created it at the same moment.
		if u, lerr := lookup("polypledger-pg"); lerr == nil {
			return u, nil
		}
		return osUser{}, fmt.Errorf("pgtest: PostgreSQL will not run as root and no unprivileged user could be made: useradd: %v: %s", err, out)
	}
	return lookup("polypledger-pg")
}

func lookup(name string) (osUser, error) {
	u, err := user.Lookup(name)
	if err != nil {
		return osUser{}, err
	}
	uid, err1 := strconv.Atoi(u.Uid)
	gid, err2 := strconv.Atoi(u.Gid)
	if err1 != nil || err2 != nil {
		return osUser{}, fmt.Errorf("pgtest: user %s has a non-numeric id", name)
	}
	return osUser{name: name, uid: uid, gid: gid}, nil
}
