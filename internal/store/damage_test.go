package store

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// filled returns a study directory whose database holds n variants with a
// job each, and the size of its database file.
func filled(t *testing.T, n int) (string, int64) {
	t.Helper()
	dir := t.TempDir()
	st, err := Open(dir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	err = st.Update(func(tx *Tx) error {
		for i := 1; i <= n; i++ {
			v := Variant{Seq: uint64(i), ID: strings.Repeat("x", 200), Label: "v", Rendered: true}
			if err := tx.PutVariant(v); err != nil {
				return err
			}
			if err := tx.PutJob(Job{Variant: uint64(i), Stage: "solve", State: Done, Tail: []string{strings.Repeat("log line ", 40)}}); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	st.Close()
	info, err := os.Stat(Path(dir))
	if err != nil {
		t.Fatal(err)
	}
	return dir, info.Size()
}

func countVariants(st *Store) (int, error) {
	n := 0
	err := st.View(func(tx *Tx) error {
		return tx.Variants(func(Variant) error { n++; return nil })
	})
	return n, err
}

// Ensure that a damaged database (truncated to half, to an odd size,
// emptied, overwritten with garbage) is refused with a message that says
// what is wrong and what to do, and never crashes the program; before
// this check, mapping a truncated file made every command die of SIGBUS.
func TestDamagedDatabase(t *testing.T) {
	cases := []struct {
		name   string
		damage func(path string, size int64) error
		why    string
	}{
		{"half", func(p string, n int64) error { return os.Truncate(p, n/2) }, "it is truncated"},
		{"odd size", func(p string, n int64) error { return os.Truncate(p, 4096*3+517) }, "it is truncated"},
		{"emptied", func(p string, n int64) error { return os.Truncate(p, 0) }, "it is empty (0 bytes)"},
		{"garbage", func(p string, n int64) error {
			return os.WriteFile(p, []byte(strings.Repeat("not a database ", 4000)), 0o600)
		}, "not a database file"},
		{"header overwritten", func(p string, n int64) error {
			f, err := os.OpenFile(p, os.O_WRONLY, 0)
			if err != nil {
				return err
			}
			defer f.Close()
			_, err = f.WriteAt([]byte("garbage!"), 40)
			return err
		}, "checksum mismatch"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir, size := filled(t, 300)
			if err := c.damage(Path(dir), size); err != nil {
				t.Fatal(err)
			}
			for _, brief := range []bool{true, false} {
				st, err := OpenExisting(dir, Options{Brief: brief})
				if err == nil {
					_, err = countVariants(st)
					st.Close()
				}
				if !errors.Is(err, ErrDamaged) {
					t.Fatalf("brief=%v: %v, want ErrDamaged", brief, err)
				}
				msg := err.Error()
				for _, want := range []string{Path(dir), "the study database is damaged", c.why, "`sweep recover " + dir + "`"} {
					if !strings.Contains(msg, want) {
						t.Errorf("message %q does not say %q", msg, want)
					}
				}
			}
			// Planning must not start a fresh study over the damaged file.
			if _, err := Open(dir, Options{}); !errors.Is(err, ErrDamaged) {
				t.Errorf("Open over a damaged file: %v", err)
			}
		})
	}
}

// Ensure that a database truncated while the program has it mapped (a
// full disk, another program) gives ErrDamaged, not a fatal SIGBUS: the
// fault is turned into an error by guard.
func TestTruncatedWhileMapped(t *testing.T) {
	dir, _ := filled(t, 2000)
	st, err := Open(dir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	if n, err := countVariants(st); err != nil || n != 2000 {
		t.Fatalf("before: %d, %v", n, err)
	}
	if err := os.Truncate(Path(dir), 8192); err != nil {
		t.Fatal(err)
	}
	_, err = countVariants(st)
	if !errors.Is(err, ErrDamaged) {
		t.Fatalf("read after truncation: %v, want ErrDamaged", err)
	}
}

// Ensure that the backup is a consistent, openable copy, that its time is
// named in the damage message, and that the study's files are private.
func TestBackupAndPermissions(t *testing.T) {
	dir, _ := filled(t, 50)
	st, err := Open(dir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := st.Backup(); err != nil {
		t.Fatal(err)
	}
	st.Close()
	copyDir := t.TempDir()
	MakeDir(copyDir)
	b, err := os.ReadFile(BackupPath(dir))
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(Path(copyDir), b, 0o600)
	cp, err := OpenExisting(copyDir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if n, err := countVariants(cp); err != nil || n != 50 {
		t.Errorf("backup holds %d variants (%v), want 50", n, err)
	}
	cp.Close()
	os.Truncate(Path(dir), 0)
	_, err = OpenExisting(dir, Options{})
	if err == nil || !strings.Contains(err.Error(), "a consistent copy from ") || !strings.Contains(err.Error(), BackupPath(dir)) {
		t.Errorf("damage message does not name the backup: %v", err)
	}
	l, err := Acquire(dir, "test")
	if err != nil {
		t.Fatal(err)
	}
	defer l.Release()
	for path, want := range map[string]os.FileMode{filepath.Join(dir, Dir): 0o700, filepath.Join(dir, Dir, "lock"): 0o600, BackupPath(dir): 0o600, Path(dir): 0o600} {
		st, err := os.Stat(path)
		if err != nil {
			t.Fatal(err)
		}
		if st.Mode().Perm() != want {
			t.Errorf("%s has mode %o, want %o", path, st.Mode().Perm(), want)
		}
	}
}
