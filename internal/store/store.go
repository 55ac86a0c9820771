package store

import (
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sync"
	"syscall"
	"time"

	bolt "go.etcd.io/bbolt"
)

// Dir is the name of the program's directory inside a study.
const Dir = ".sweep"

var (
	bucketMeta     = []byte("meta")
	bucketVariants = []byte("variants")
	bucketJobs     = []byte("jobs")
	bucketKeys     = []byte("keys") // point key (name or values) -> variant seq
	bucketResults  = []byte("results")
	keyStudy       = []byte("study")
)

// ErrNoStudy is returned when a directory has no planned study.
var ErrNoStudy = errors.New("no planned study here")

// Options tune how a Store uses its database.
type Options struct {
	// Brief opens the database file for each transaction and closes it
	// after, so other processes can read between transactions. Each open
	// costs well under a millisecond. Default false: the file stays open.
	Brief bool
	// Linger, with Brief, keeps the file open after a transaction for up
	// to LingerFor, as long as no other process waits for it: a run that
	// commits many times a second then pays for one open, not one per
	// commit. A process opening the file briefly says that it waits by a
	// shared lock on .sweep/waiting, which the lingering holder sees
	// after its transaction; an idle holder closes the file when LingerFor
	// has passed.
	Linger bool
	// Timeout is how long to wait for another process's transaction to
	// finish before giving up. Default 10 s.
	Timeout time.Duration
}

// LingerFor is how long a lingering store keeps the file open after its
// last transaction.
const LingerFor = 25 * time.Millisecond

// Store is a study database.
type Store struct {
	path string
	opts Options
	db   *bolt.DB
	// mu guards the lingering file (linger) and its timer.
	mu      sync.Mutex
	linger  *bolt.DB
	timer   *time.Timer
	waiting *os.File // .sweep/waiting, for a lingering store
	// Migrated is the format the database was migrated from when it was
	// opened (0 when it was already current); the copy made before is at
	// MigrationBackupPath.
	Migrated int
}

// Path returns the database file's path for a study directory.
func Path(studyDir string) string { return filepath.Join(studyDir, Dir, "study.db") }

// Exists reports whether the study directory has a database.
func Exists(studyDir string) bool {
	_, err := os.Stat(Path(studyDir))
	return err == nil
}

// Open opens (creating if needed) the database of the study in studyDir.
func Open(studyDir string, opts Options) (*Store, error) {
	if opts.Timeout == 0 {
		opts.Timeout = 10 * time.Second
	}
	if err := MakeDir(studyDir); err != nil {
		return nil, err
	}
	s := &Store{path: Path(studyDir), opts: opts}
	private(s.path)
	db, err := s.open()
	if err != nil {
		return nil, err
	}
	err = guard(s.path, func() error {
		var err error
		s.Migrated, err = s.prepare(db)
		return err
	})
	if err != nil {
		db.Close()
		var fe *FormatError
		if errors.As(err, &fe) {
			return nil, err
		}
		return nil, fmt.Errorf("initialise %s: %w", s.path, err)
	}
	if opts.Brief {
		db.Close()
	} else {
		s.db = db
	}
	return s, nil
}

// OpenExisting opens the database of a study that has been planned, and
// returns ErrNoStudy (wrapped, with advice) when there is none.
func OpenExisting(studyDir string, opts Options) (*Store, error) {
	if !Exists(studyDir) {
		return nil, fmt.Errorf("%s: %w; run `sweep plan %s` first", studyDir, ErrNoStudy, studyDir)
	}
	return Open(studyDir, opts)
}

// MakeDir creates the study's .sweep directory, private to its owner
// (0700: it holds the database, the logs of the runs and the executor's
// socket), and makes an existing one private.
func MakeDir(studyDir string) error {
	dir := filepath.Join(studyDir, Dir)
	if err := os.MkdirAll(dir, 0o700); err != nil {
		return fmt.Errorf("create %s: %w", dir, err)
	}
	if st, err := os.Stat(dir); err == nil && st.Mode().Perm() != 0o700 {
		os.Chmod(dir, 0o700)
	}
	return nil
}

func (s *Store) open() (*bolt.DB, error) {
	if err := checkFile(s.path); err != nil {
		return nil, err
	}
	if !s.opts.Linger {
		// Say that this process waits, so that a lingering holder
		// lets go of the file.
		defer s.announce()()
	}
	var db *bolt.DB
	err := guard(s.path, func() error {
		var err error
		db, err = bolt.Open(s.path, 0o600, &bolt.Options{Timeout: s.opts.Timeout})
		return err
	})
	if err != nil {
		var de *DamagedError
		switch {
		case errors.As(err, &de):
			return nil, err
		case errors.Is(err, bolt.ErrTimeout):
			return nil, fmt.Errorf("open %s: another process kept the database busy for %s; try again", s.path, s.opts.Timeout)
		case errors.Is(err, bolt.ErrInvalid), errors.Is(err, bolt.ErrChecksum), errors.Is(err, bolt.ErrVersionMismatch):
			return nil, damaged(s.path, err.Error())
		}
		return nil, fmt.Errorf("open %s: %w", s.path, err)
	}
	return db, nil
}

// StudyDir returns the study directory the database belongs to.
func (s *Store) StudyDir() string { return filepath.Dir(filepath.Dir(s.path)) }

// Close closes the database.
func (s *Store) Close() error {
	s.mu.Lock()
	s.dropLocked()
	if s.waiting != nil {
		s.waiting.Close()
		s.waiting = nil
	}
	s.mu.Unlock()
	if s.db == nil {
		return nil
	}
	err := s.db.Close()
	s.db = nil
	return err
}

// dropLocked closes the lingering file. Called with s.mu held.
func (s *Store) dropLocked() {
	if s.timer != nil {
		s.timer.Stop()
		s.timer = nil
	}
	if s.linger != nil {
		s.linger.Close()
		s.linger = nil
	}
}

// waitingPath is the file by whose shared lock a process says that it
// waits for the database.
func (s *Store) waitingPath() string { return filepath.Join(filepath.Dir(s.path), "waiting") }

// othersWait reports whether another process holds a shared lock on
// .sweep/waiting: it waits to open the database.
func (s *Store) othersWait() bool {
	if s.waiting == nil {
		f, err := os.OpenFile(s.waitingPath(), os.O_RDWR|os.O_CREATE, 0o600)
		if err != nil {
			return true // cannot tell: do not keep others out
		}
		s.waiting = f
	}
	fd := int(s.waiting.Fd())
	if err := syscall.Flock(fd, syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		return true
	}
	syscall.Flock(fd, syscall.LOCK_UN)
	return false
}

// announce takes a shared lock on .sweep/waiting while this process
// opens the file, so that a lingering holder lets go of it; the returned
// function releases it.
func (s *Store) announce() func() {
	f, err := os.OpenFile(s.waitingPath(), os.O_RDWR|os.O_CREATE, 0o600)
	if err != nil {
		return func() {}
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_SH); err != nil {
		f.Close()
		return func() {}
	}
	return func() { f.Close() }
}

// Update runs fn in a read-write transaction and commits it (fsynced)
// before returning.
func (s *Store) Update(fn func(*Tx) error) error {
	return s.with(func(db *bolt.DB) error {
		return db.Update(func(tx *bolt.Tx) error { return fn(&Tx{tx}) })
	})
}

// View runs fn in a read-only transaction.
func (s *Store) View(fn func(*Tx) error) error {
	return s.with(func(db *bolt.DB) error {
		return db.View(func(tx *bolt.Tx) error { return fn(&Tx{tx}) })
	})
}

func (s *Store) with(fn func(*bolt.DB) error) error {
	if s.db != nil {
		return guard(s.path, func() error { return fn(s.db) })
	}
	if s.opts.Linger {
		return s.withLinger(fn)
	}
	db, err := s.open()
	if err != nil {
		return err
	}
	err = guard(s.path, func() error { return fn(db) })
	if cerr := db.Close(); err == nil {
		err = cerr
	}
	return err
}

// withLinger runs fn on the lingering file, opening it if needed, and
// keeps it open afterwards unless another process waits for it.
func (s *Store) withLinger(fn func(*bolt.DB) error) error {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.timer != nil {
		s.timer.Stop()
		s.timer = nil
	}
	db := s.linger
	if db == nil {
		var err error
		if db, err = s.open(); err != nil {
			return err
		}
	}
	s.linger = nil
	err := guard(s.path, func() error { return fn(db) })
	if err != nil || s.othersWait() {
		if cerr := db.Close(); err == nil {
			err = cerr
		}
		return err
	}
	s.linger = db
	s.timer = time.AfterFunc(LingerFor, func() {
		s.mu.Lock()
		defer s.mu.Unlock()
		if s.linger == db {
			s.dropLocked()
		}
	})
	return nil
}

// BackupPath returns where a study's database copy is kept.
func BackupPath(studyDir string) string { return Path(studyDir) + ".bak" }

// BackupTime returns when the study's database copy was made.
func BackupTime(studyDir string) (time.Time, bool) {
	st, err := os.Stat(BackupPath(studyDir))
	if err != nil {
		return time.Time{}, false
	}
	return st.ModTime(), true
}

// Backup writes a consistent copy of the database (from one read
// transaction) to BackupPath, atomically: a temporary file, synced, then
// renamed over the old copy, and the directory synced.
func (s *Store) Backup() error {
	dst := s.path + ".bak"
	tmp, err := os.CreateTemp(filepath.Dir(s.path), ".backup-*")
	if err != nil {
		return fmt.Errorf("back up the study database: %w", err)
	}
	defer os.Remove(tmp.Name())
	err = s.View(func(tx *Tx) error {
		_, err := tx.tx.WriteTo(tmp)
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
		return fmt.Errorf("back up the study database: %w", err)
	}
	return nil
}

// private makes an existing file readable by its owner only (files of
// studies made before the program kept them private).
func private(path string) {
	if st, err := os.Stat(path); err == nil && st.Mode().Perm()&0o077 != 0 {
		os.Chmod(path, st.Mode().Perm()&0o700)
	}
}

func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	return d.Sync()
}

// Tx is a transaction on a study database. The read methods Study,
// Variants and PointKey also work on a nil *Tx, which reads as an empty
// database (a dry-run plan of a study never planned).
type Tx struct{ tx *bolt.Tx }

// Study returns the study record, or ok false before the first plan.
func (t *Tx) Study() (st Study, ok bool, err error) {
	if t == nil {
		return Study{}, false, nil
	}
	b := t.tx.Bucket(bucketMeta).Get(keyStudy)
	if b == nil {
		return Study{}, false, nil
	}
	err = json.Unmarshal(b, &st)
	return st, true, err
}

// PutStudy writes the study record.
func (t *Tx) PutStudy(st Study) error { return t.put(bucketMeta, keyStudy, st) }

// Variant returns the variant with the given sequence number.
func (t *Tx) Variant(seq uint64) (Variant, bool, error) {
	var v Variant
	b := t.tx.Bucket(bucketVariants).Get(seqKey(seq))
	if b == nil {
		return v, false, nil
	}
	return v, true, json.Unmarshal(b, &v)
}

// PutVariant writes a variant.
func (t *Tx) PutVariant(v Variant) error { return t.put(bucketVariants, seqKey(v.Seq), v) }

// Variants calls fn for each variant in sequence order; fn may stop the
// walk by returning an error.
func (t *Tx) Variants(fn func(Variant) error) error {
	if t == nil {
		return nil
	}
	return t.tx.Bucket(bucketVariants).ForEach(func(_, b []byte) error {
		var v Variant
		if err := json.Unmarshal(b, &v); err != nil {
			return err
		}
		return fn(v)
	})
}

// PointKey returns the variant that a design point's key belongs to.
func (t *Tx) PointKey(key string) (uint64, bool) {
	if t == nil {
		return 0, false
	}
	b := t.tx.Bucket(bucketKeys).Get([]byte(key))
	if len(b) != 8 {
		return 0, false
	}
	return binary.BigEndian.Uint64(b), true
}

// PutPointKey records that a design point's key belongs to a variant.
func (t *Tx) PutPointKey(key string, seq uint64) error {
	return t.tx.Bucket(bucketKeys).Put([]byte(key), seqKey(seq))
}

// Job returns the job of a variant's stage.
func (t *Tx) Job(variant uint64, index int) (Job, bool, error) {
	var j Job
	b := t.tx.Bucket(bucketJobs).Get(jobKey(variant, index))
	if b == nil {
		return j, false, nil
	}
	return j, true, json.Unmarshal(b, &j)
}

// PutJob writes a job.
func (t *Tx) PutJob(j Job) error { return t.put(bucketJobs, j.Key(), j) }

// Jobs calls fn for each job, in variant then stage order.
func (t *Tx) Jobs(fn func(Job) error) error {
	return t.tx.Bucket(bucketJobs).ForEach(func(_, b []byte) error {
		var j Job
		if err := json.Unmarshal(b, &j); err != nil {
			return err
		}
		return fn(j)
	})
}

// Results returns a variant's last harvest.
func (t *Tx) Results(seq uint64) (Results, bool, error) {
	var r Results
	b := t.tx.Bucket(bucketResults)
	if b == nil {
		return r, false, nil
	}
	v := b.Get(seqKey(seq))
	if v == nil {
		return r, false, nil
	}
	return r, true, json.Unmarshal(v, &r)
}

// PutResults records a variant's harvest.
func (t *Tx) PutResults(seq uint64, r Results) error { return t.put(bucketResults, seqKey(seq), r) }

func (t *Tx) put(bucket, key []byte, v any) error {
	b, err := json.Marshal(v)
	if err != nil {
		return err
	}
	return t.tx.Bucket(bucket).Put(key, b)
}

func seqKey(seq uint64) []byte {
	k := make([]byte, 8)
	binary.BigEndian.PutUint64(k, seq)
	return k
}

func jobKey(variant uint64, index int) []byte {
	k := make([]byte, 10)
	binary.BigEndian.PutUint64(k, variant)
	binary.BigEndian.PutUint16(k[8:], uint16(index))
	return k
}
