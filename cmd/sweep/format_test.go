package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/store"
	bolt "go.etcd.io/bbolt"
)

// formatOneStudy copies testdata/format1-study, whose database
// (../../internal/store/testdata/format1.db) was made by the program
// before the database carried a format version, into a new directory.
func formatOneStudy(t *testing.T) string {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "old")
	if err := exec.Command("cp", "-r", filepath.Join("testdata", "format1-study"), dir).Run(); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join("..", "..", "internal", "store", "testdata", "format1.db"))
	if err != nil {
		t.Fatal(err)
	}
	if err := store.MakeDir(dir); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(store.Path(dir), b, 0o600); err != nil {
		t.Fatal(err)
	}
	return dir
}

// Ensure that a study made by the previous release opens with this one:
// status says the database was migrated and where the old copy is, lists
// the four variants done, and rank reads the results the old program
// harvested and harvests again.
func TestFormatOneStudy(t *testing.T) {
	dir := formatOneStudy(t)
	out, errs, code := sweep(t, "status", dir)
	if code != 0 || !strings.Contains(errs, "note: the study's database was migrated from format 1 to 2; the copy made before is "+store.MigrationBackupPath(dir, 1)) ||
		!strings.Contains(out, "4 variants: 4 done, 0 running, 0 failed, 0 pending") {
		t.Fatalf("status of a format 1 study: exit %d\n%s\n%s", code, out, errs)
	}
	out, errs, code = sweep(t, "rank", dir)
	if code != 0 || strings.Contains(errs, "migrated") || !strings.Contains(out, "v001") || strings.Count(out, "converged") != 4 {
		t.Errorf("rank after the migration: exit %d\n%s\n%s", code, out, errs)
	}
}

// Ensure that a study whose database a newer program wrote is refused
// with what to do, and left as it was.
func TestNewerFormatStudy(t *testing.T) {
	dir := formatOneStudy(t)
	db, err := bolt.Open(store.Path(dir), 0o600, nil)
	if err != nil {
		t.Fatal(err)
	}
	db.Update(func(tx *bolt.Tx) error { return tx.Bucket([]byte("meta")).Put([]byte("format"), []byte("7")) })
	db.Close()
	before, _ := os.ReadFile(store.Path(dir))
	for _, verb := range []string{"status", "rank", "plan"} {
		_, errs, code := sweep(t, verb, dir)
		if code == 0 || !strings.Contains(errs, "has database format 7 and this program reads formats up to 2: it was written by a newer version of sweep") {
			t.Errorf("%s of a newer study: exit %d, %s", verb, code, errs)
		}
	}
	if after, _ := os.ReadFile(store.Path(dir)); string(before) != string(after) {
		t.Errorf("the newer study's database was changed")
	}
}
