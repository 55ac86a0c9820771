package store

import (
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"hash/fnv"
	"io"
	"os"
	"path/filepath"
	"runtime/debug"
	"time"

	bolt "go.etcd.io/bbolt"
)

// ErrDamaged is wrapped by every error that says the study database
// cannot be read safely: empty, truncated, overwritten, or torn.
var ErrDamaged = errors.New("the study database is damaged")

// The database file's first two pages are bbolt's meta pages. Their
// layout (bbolt's internal/common/meta.go and page.go) is: a 16-byte page
// header, then magic, version, page size and flags (4 bytes each), the
// root bucket (page id and sequence, 8 bytes each), the freelist page id,
// the high-water mark (the number of pages in use), the transaction id
// and an FNV-1a checksum of the preceding meta bytes (8 bytes each).
const (
	boltMagic   = 0xED0CDAED
	boltVersion = 2
	metaOffset  = 16
	metaSumLen  = 56 // bytes of the meta covered by its checksum
)

type metaPage struct {
	pageSize           uint32
	root, freelist, hw uint64
	txid               uint64
}

// readMeta decodes and validates one meta page.
func readMeta(b []byte) (metaPage, error) {
	if len(b) < metaOffset+metaSumLen+8 {
		return metaPage{}, errors.New("short meta page")
	}
	m := b[metaOffset:]
	le := binary.NativeEndian
	if le.Uint32(m[0:]) != boltMagic {
		return metaPage{}, errors.New("not a database file (no marker)")
	}
	if v := le.Uint32(m[4:]); v != boltVersion {
		return metaPage{}, fmt.Errorf("database format version %d, this program reads %d", v, boltVersion)
	}
	h := fnv.New64a()
	h.Write(m[:metaSumLen])
	if h.Sum64() != le.Uint64(m[metaSumLen:]) {
		return metaPage{}, errors.New("checksum mismatch")
	}
	return metaPage{pageSize: le.Uint32(m[8:]), root: le.Uint64(m[16:]), freelist: le.Uint64(m[32:]),
		hw: le.Uint64(m[40:]), txid: le.Uint64(m[48:])}, nil
}

// checkFile inspects a database file before it is mapped into memory:
// mapping a file shorter than its own meta page claims makes any read of
// the missing pages a SIGBUS, which no Go code can recover from. It
// returns nil for a file that does not exist.
func checkFile(path string) error {
	f, err := os.Open(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return err
	}
	size := st.Size()
	if size == 0 {
		return damaged(path, "it is empty (0 bytes)")
	}
	head := make([]byte, 4096)
	n, err := io.ReadFull(f, head)
	if err != nil && !errors.Is(err, io.ErrUnexpectedEOF) {
		return err
	}
	head = head[:n]
	m0, err0 := readMeta(head)
	if err0 != nil {
		return damaged(path, "its first page: "+err0.Error())
	}
	ps := int64(m0.pageSize)
	if ps < 512 || ps > 1<<16 || ps&(ps-1) != 0 {
		return damaged(path, fmt.Sprintf("its page size %d is not a power of two between 512 and 65536", ps))
	}
	if size < 2*ps {
		return damaged(path, fmt.Sprintf("it is truncated (%d bytes, shorter than its two header pages of %d bytes)", size, ps))
	}
	second := make([]byte, metaOffset+metaSumLen+8)
	if _, err := f.ReadAt(second, ps); err != nil {
		return err
	}
	m1, err1 := readMeta(second)
	// bbolt uses the meta page with the higher transaction id that is
	// valid, and falls back to the other one.
	m := m0
	if err1 == nil && m1.txid > m0.txid {
		m = m1
	}
	if need := int64(m.hw) * ps; need > size {
		return damaged(path, fmt.Sprintf("it is truncated (%d bytes; its last transaction needs %d)", size, need))
	}
	if m.root >= m.hw || (m.freelist >= m.hw && m.freelist != ^uint64(0)) {
		return damaged(path, "its header points beyond its own pages")
	}
	return nil
}

func damaged(path, why string) error {
	return &DamagedError{Path: path, Why: why}
}

// DamagedError says which database is damaged and how, and what to do.
type DamagedError struct {
	Path string
	Why  string
}

func (e *DamagedError) Error() string {
	dir := filepath.Dir(filepath.Dir(e.Path))
	msg := fmt.Sprintf("%s: %v: %s", e.Path, ErrDamaged, e.Why)
	if t, ok := BackupTime(dir); ok {
		msg += fmt.Sprintf("; a consistent copy from %s is kept in %s", t.Local().Format(time.DateTime), BackupPath(dir))
	}
	return msg + fmt.Sprintf("; `sweep recover %s` rebuilds the study's state (from that copy if it is sound, and from the variant directories and their logs), keeping the damaged file aside", dir)
}

func (e *DamagedError) Unwrap() error { return ErrDamaged }

// guard runs fn, turning a memory fault on the mapped file (a file
// truncated or torn under the program) and a panic inside the database
// library (a page that does not decode) into ErrDamaged, instead of a
// crash with a stack trace.
func guard(path string, fn func() error) (err error) {
	old := debug.SetPanicOnFault(true)
	defer debug.SetPanicOnFault(old)
	defer func() {
		if p := recover(); p != nil {
			err = damaged(path, fmt.Sprintf("reading it failed (%v)", p))
		}
	}()
	return fn()
}

// Counts are the records of a study database.
type Counts struct {
	Variants, Jobs int
}

// Verify reads a database file from end to end without changing it: its
// header pages, then every record of every bucket, each decoded. It
// returns the records counted, or the first problem (ErrDamaged for a
// file that cannot be read safely).
func Verify(path string) (Counts, error) {
	var c Counts
	if err := checkFile(path); err != nil {
		return c, err
	}
	if _, err := os.Stat(path); err != nil {
		return c, err
	}
	err := guard(path, func() error {
		db, err := bolt.Open(path, 0o600, &bolt.Options{ReadOnly: true, Timeout: 10 * time.Second})
		if err != nil {
			return damaged(path, err.Error())
		}
		defer db.Close()
		return db.View(func(btx *bolt.Tx) error {
			for _, name := range [][]byte{bucketMeta, bucketVariants, bucketJobs, bucketKeys, bucketResults} {
				if btx.Bucket(name) == nil {
					return damaged(path, fmt.Sprintf("it has no %q table", name))
				}
			}
			tx := &Tx{btx}
			if _, _, err := tx.Study(); err != nil {
				return damaged(path, "its study record does not decode: "+err.Error())
			}
			if err := tx.Variants(func(Variant) error { c.Variants++; return nil }); err != nil {
				return damaged(path, "a variant record does not decode: "+err.Error())
			}
			if err := tx.Jobs(func(Job) error { c.Jobs++; return nil }); err != nil {
				return damaged(path, "a job record does not decode: "+err.Error())
			}
			return btx.Bucket(bucketResults).ForEach(func(_, v []byte) error {
				var r Results
				if err := json.Unmarshal(v, &r); err != nil {
					return damaged(path, "a results record does not decode: "+err.Error())
				}
				return nil
			})
		})
	})
	return c, err
}
