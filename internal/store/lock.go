package store

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"time"
)

// ErrLocked is returned by Acquire when another process holds the study.
var ErrLocked = errors.New("study is in use")

// Holder describes the process that holds a study's lock.
type Holder struct {
	PID     int       `json:"pid"`
	Host    string    `json:"host"`
	Command string    `json:"command"`
	Since   time.Time `json:"since"`
}

// Lock is a held study lock.
type Lock struct{ f *os.File }

// Acquire takes the study's lock for a process that will change the
// study (plan, run, reset). It fails at once with ErrLocked, naming the
// holder, when another process has it. The lock is an flock on
// .sweep/lock, so it is released by the kernel when its holder dies, even
// by SIGKILL.
func Acquire(studyDir, command string) (*Lock, error) {
	if err := MakeDir(studyDir); err != nil {
		return nil, err
	}
	path := filepath.Join(studyDir, Dir, "lock")
	private(path)
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o600)
	if err != nil {
		return nil, fmt.Errorf("open lock: %w", err)
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		f.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			h, _ := ReadHolder(studyDir)
			return nil, fmt.Errorf("%w: %s; wait for it to finish or stop it (kill -INT %d), then try again", ErrLocked, h, h.PID)
		}
		return nil, fmt.Errorf("lock %s: %w", path, err)
	}
	host, _ := os.Hostname()
	h := Holder{PID: os.Getpid(), Host: host, Command: command, Since: time.Now().UTC().Truncate(time.Second)}
	b, _ := json.Marshal(h)
	if err := f.Truncate(0); err == nil {
		f.WriteAt(append(b, '\n'), 0)
	}
	return &Lock{f: f}, nil
}

// Release lets another process take the study.
func (l *Lock) Release() error {
	if l == nil || l.f == nil {
		return nil
	}
	l.f.Truncate(0)
	err := l.f.Close()
	l.f = nil
	return err
}

// ReadHolder reads who holds (or last held) the study's lock.
func ReadHolder(studyDir string) (Holder, error) {
	var h Holder
	b, err := os.ReadFile(filepath.Join(studyDir, Dir, "lock"))
	if err != nil {
		return h, err
	}
	err = json.Unmarshal([]byte(strings.TrimSpace(string(b))), &h)
	return h, err
}

// Held reports whether some process holds the study's lock now.
func Held(studyDir string) bool {
	f, err := os.Open(filepath.Join(studyDir, Dir, "lock"))
	if err != nil {
		return false
	}
	defer f.Close()
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_SH|syscall.LOCK_NB); err != nil {
		return true
	}
	syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
	return false
}

func (h Holder) String() string {
	if h.PID == 0 {
		return "held by another process"
	}
	return fmt.Sprintf("held by `sweep %s` (pid %d on %s, since %s)", h.Command, h.PID, h.Host, h.Since.Local().Format("2006-01-02 15:04:05"))
}
