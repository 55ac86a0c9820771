package store

import (
	"encoding/json"
	"errors"
	"fmt"

	"os"
	"path/filepath"
	"strconv"

	bolt "go.etcd.io/bbolt"
)

// FormatVersion is the layout of the records this program writes, kept
// in the meta bucket under "format". Format 1 is the layout of databases
// made before the key existed; format 2 the same records, owned by this
// package (see records.go). A change to a record's layout raises it and
// adds a step to migrations.
const FormatVersion = 2

var keyFormat = []byte("format")

// ErrNewerFormat is returned (wrapped in a *FormatError) for a database
// written by a newer program.
var ErrNewerFormat = errors.New("database written by a newer version of sweep")

// FormatError says that a database's format cannot be read.
type FormatError struct {
	Path   string
	Format int
}

func (e *FormatError) Error() string {
	return fmt.Sprintf("%s has database format %d and this program reads formats up to %d: it was written by a newer version of sweep; open the study with that version (nothing was changed)",
		e.Path, e.Format, FormatVersion)
}

func (e *FormatError) Unwrap() error { return ErrNewerFormat }

// migrations[n] turns a format n database into format n+1, within one
// transaction.
var migrations = map[int]func(tx *bolt.Tx) error{
	1: migrate1to2,
}

// format returns a database's format: the stored key, 1 for a database
// that has a study record but no key (made before the key existed), and 0
// for a new, empty one.
func format(tx *bolt.Tx) (int, error) {
	meta := tx.Bucket(bucketMeta)
	if meta == nil {
		return 0, nil
	}
	if b := meta.Get(keyFormat); b != nil {
		n, err := strconv.Atoi(string(b))
		if err != nil || n < 1 {
			return 0, fmt.Errorf("the database's format %q is not a version number", b)
		}
		return n, nil
	}
	if meta.Get(keyStudy) != nil {
		return 1, nil
	}
	return 0, nil
}

// MigrationBackupPath returns where the copy of a study's database is kept
// before it is migrated from format n.
func MigrationBackupPath(studyDir string, n int) string {
	return fmt.Sprintf("%s.format%d", Path(studyDir), n)
}

// prepare readies an opened database: buckets, format key, and the
// migration of an older format (after a copy of the file is made). A
// database of a newer format is refused untouched.
func (s *Store) prepare(db *bolt.DB) (migrated int, err error) {
	var n int
	if err := db.View(func(tx *bolt.Tx) error {
		n, err = format(tx)
		return err
	}); err != nil {
		return 0, err
	}
	if n > FormatVersion {
		return 0, &FormatError{Path: s.path, Format: n}
	}
	if n > 0 && n < FormatVersion {
		if err := s.copyFor(db, n); err != nil {
			return 0, err
		}
	}
	err = db.Update(func(tx *bolt.Tx) error {
		for _, b := range [][]byte{bucketMeta, bucketVariants, bucketJobs, bucketKeys, bucketResults} {
			if _, err := tx.CreateBucketIfNotExists(b); err != nil {
				return err
			}
		}
		// Read the format again inside the transaction: another process
		// may have migrated the file meanwhile.
		cur, err := format(tx)
		if err != nil {
			return err
		}
		if cur > FormatVersion {
			return &FormatError{Path: s.path, Format: cur}
		}
		for v := max(cur, 1); cur > 0 && v < FormatVersion; v++ {
			if err := migrations[v](tx); err != nil {
				return fmt.Errorf("migrate the database from format %d to %d: %w (nothing was changed; the copy made before is %s)",
					v, v+1, err, MigrationBackupPath(s.StudyDir(), n))
			}
		}
		if cur != FormatVersion {
			return tx.Bucket(bucketMeta).Put(keyFormat, []byte(strconv.Itoa(FormatVersion)))
		}
		return nil
	})
	if err != nil {
		return 0, err
	}
	if n > 0 && n < FormatVersion {
		return n, nil
	}
	return 0, nil
}

// copyFor copies the database file, as one read transaction sees it, to
// MigrationBackupPath before a migration from format n.
func (s *Store) copyFor(db *bolt.DB, n int) error {
	dst := MigrationBackupPath(s.StudyDir(), n)
	tmp, err := os.CreateTemp(filepath.Dir(s.path), ".migrate-*")
	if err != nil {
		return fmt.Errorf("copy the database before migrating it: %w", err)
	}
	defer os.Remove(tmp.Name())
	err = db.View(func(tx *bolt.Tx) error {
		_, err := tx.WriteTo(tmp)
		return err
	})
	if err == nil {
		err = tmp.Sync()
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp.Name(), dst)
	}
	if err == nil {
		err = syncDir(filepath.Dir(s.path))
	}
	if err != nil {
		return fmt.Errorf("copy the database before migrating it: %w", err)
	}
	return nil
}

// migrate1to2 rewrites every record of a format 1 database through the
// format 2 types. The layouts agree (format 2 gives the records types of
// their own, with the same JSON), so this reads each record with the new
// types, refusing one they cannot read, and writes it back as they write
// it.
func migrate1to2(tx *bolt.Tx) error {
	steps := []struct {
		bucket []byte
		record func() any
	}{
		{bucketVariants, func() any { return new(Variant) }},
		{bucketJobs, func() any { return new(Job) }},
		{bucketResults, func() any { return new(Results) }},
	}
	for _, st := range steps {
		b := tx.Bucket(st.bucket)
		type kv struct{ k, v []byte }
		var out []kv
		if err := b.ForEach(func(k, v []byte) error {
			rec := st.record()
			if err := json.Unmarshal(v, rec); err != nil {
				return fmt.Errorf("record %x of %s cannot be read: %w", k, st.bucket, err)
			}
			nv, err := json.Marshal(rec)
			if err != nil {
				return err
			}
			out = append(out, kv{append([]byte(nil), k...), nv})
			return nil
		}); err != nil {
			return err
		}
		for _, e := range out {
			if err := b.Put(e.k, e.v); err != nil {
				return err
			}
		}
	}
	var st Study
	if b := tx.Bucket(bucketMeta).Get(keyStudy); b != nil {
		if err := json.Unmarshal(b, &st); err != nil {
			return fmt.Errorf("the study record cannot be read: %w", err)
		}
	}
	return nil
}
