package store

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	bolt "go.etcd.io/bbolt"
)

// studyWith copies a database file into a new study directory.
func studyWith(t *testing.T, db string) string {
	t.Helper()
	dir := t.TempDir()
	b, err := os.ReadFile(db)
	if err != nil {
		t.Fatal(err)
	}
	if err := MakeDir(dir); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(Path(dir), b, 0o600); err != nil {
		t.Fatal(err)
	}
	return dir
}

// Ensure that a database made by the program before the format version
// (testdata/format1.db) is migrated on opening: a copy of the old file is
// kept first, the format key is written, and every record reads back
// with its values: the four variants' parameter values of both kinds, the
// jobs' states, and the results with their numbers, unknown ones NaN,
// and the cycle statistics.
func TestMigrateFormat1(t *testing.T) {
	dir := studyWith(t, filepath.Join("testdata", "format1.db"))
	st, err := Open(dir, Options{Brief: true})
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	if st.Migrated != 1 {
		t.Errorf("migrated from %d, want 1", st.Migrated)
	}
	old, err := os.ReadFile(MigrationBackupPath(dir, 1))
	if err != nil {
		t.Fatalf("no copy of the format 1 database: %v", err)
	}
	if len(old) == 0 || formatOf(t, MigrationBackupPath(dir, 1)) != 1 {
		t.Errorf("the copy is not the format 1 database")
	}
	if n := formatOf(t, Path(dir)); n != FormatVersion {
		t.Errorf("format after migration %d", n)
	}
	var labels []string
	var values []string
	var done int
	var drag Average
	err = st.View(func(tx *Tx) error {
		if err := tx.Variants(func(v Variant) error {
			labels = append(labels, v.Label)
			for _, x := range v.Values {
				b, _ := x.MarshalJSON()
				values = append(values, string(b))
			}
			return nil
		}); err != nil {
			return err
		}
		if err := tx.Jobs(func(j Job) error {
			if j.State == Done && j.Attempts == 1 {
				done++
			}
			return nil
		}); err != nil {
			return err
		}
		res, ok, err := tx.Results(1)
		if !ok || err != nil {
			t.Fatalf("results of variant 1: %v %v", ok, err)
		}
		drag = res.Quantities["drag"]
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(labels, ",") != "v001,v002,v003,v004" || strings.Join(values, ",") != `1,"round",1,"square",2,"round",2,"square"` || done != 4 {
		t.Errorf("variants %v values %v done jobs %d", labels, values, done)
	}
	if drag.Verdict != "converged" || math.Abs(float64(drag.Mean)-1) > 1e-3 || drag.Cycle == nil || drag.Cycle.Cycles < 50 ||
		!(float64(drag.HalfWidth) >= 0) || !math.IsNaN(float64(drag.TauInt)) {
		t.Errorf("drag of v001: %+v", drag)
	}
	// Opening again changes nothing more.
	st2, err := Open(dir, Options{Brief: true})
	if err != nil || st2.Migrated != 0 {
		t.Errorf("second open: migrated %d, %v", st2.Migrated, err)
	}
}

// formatOf returns a database file's format.
func formatOf(t *testing.T, path string) int {
	t.Helper()
	db, err := bolt.Open(path, 0o600, &bolt.Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	var n int
	db.View(func(tx *bolt.Tx) error {
		n, err = format(tx)
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return n
}

// Ensure that a database of a newer format is refused with a message that
// says what to do, and left as it was.
func TestRefuseNewerFormat(t *testing.T) {
	dir := t.TempDir()
	st, err := Open(dir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	st.Update(func(tx *Tx) error {
		tx.PutStudy(Study{ID: "x", NextSeq: 1})
		return tx.tx.Bucket(bucketMeta).Put(keyFormat, []byte("99"))
	})
	st.Close()
	before, _ := os.ReadFile(Path(dir))
	_, err = Open(dir, Options{Brief: true})
	var fe *FormatError
	if !errors.As(err, &fe) || !errors.Is(err, ErrNewerFormat) || fe.Format != 99 ||
		!strings.Contains(err.Error(), "has database format 99 and this program reads formats up to 2: it was written by a newer version of sweep; open the study with that version (nothing was changed)") {
		t.Fatalf("newer format: %v", err)
	}
	if after, _ := os.ReadFile(Path(dir)); !bytes.Equal(before, after) {
		t.Errorf("the refused database was changed")
	}
}

// Ensure that a format 1 database with a record the new types cannot read
// is not migrated: the error names the record, the file keeps format 1,
// and the copy made before stays.
func TestMigrationRefusesBadRecord(t *testing.T) {
	dir := studyWith(t, filepath.Join("testdata", "format1.db"))
	db, err := bolt.Open(Path(dir), 0o600, nil)
	if err != nil {
		t.Fatal(err)
	}
	db.Update(func(tx *bolt.Tx) error {
		return tx.Bucket(bucketVariants).Put(seqKey(9), []byte(`{"seq": 9, "values": [{"bad": 1}]}`))
	})
	db.Close()
	_, err = Open(dir, Options{Brief: true})
	if err == nil || !strings.Contains(err.Error(), "migrate the database from format 1 to 2: record 0000000000000009 of variants cannot be read") {
		t.Fatalf("bad record: %v", err)
	}
	if n := formatOf(t, Path(dir)); n != 1 {
		t.Errorf("format after the refused migration %d, want 1", n)
	}
	if _, err := os.Stat(MigrationBackupPath(dir, 1)); err != nil {
		t.Errorf("no copy before the refused migration: %v", err)
	}
}
