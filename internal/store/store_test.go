package store

import (
	"errors"
	"os"
	"strconv"
	"strings"
	"testing"
	"time"
)

// Ensure that a second writer is refused at once, told who holds the
// study, and can take it once the holder lets go.
func TestLock(t *testing.T) {
	dir := t.TempDir()
	l, err := Acquire(dir, "run")
	if err != nil {
		t.Fatal(err)
	}
	if !Held(dir) {
		t.Error("Held = false while locked")
	}
	_, err = Acquire(dir, "plan")
	if !errors.Is(err, ErrLocked) {
		t.Fatalf("second Acquire: %v", err)
	}
	if !strings.Contains(err.Error(), "`sweep run` (pid "+strconv.Itoa(os.Getpid())) {
		t.Errorf("holder not named: %v", err)
	}
	if err := l.Release(); err != nil {
		t.Fatal(err)
	}
	if Held(dir) {
		t.Error("Held = true after release")
	}
	l2, err := Acquire(dir, "plan")
	if err != nil {
		t.Fatalf("after release: %v", err)
	}
	l2.Release()
}

// Ensure that variants and jobs read back as written, in key order, with
// values of both kinds intact, through brief (open-per-transaction)
// access.
func TestRoundTrip(t *testing.T) {
	dir := t.TempDir()
	st, err := Open(dir, Options{Brief: true})
	if err != nil {
		t.Fatal(err)
	}
	vals := []Value{{Num: 0.1}, {Num: -3e-7}, {Text: "round"}}
	err = st.Update(func(tx *Tx) error {
		for _, seq := range []uint64{3, 1, 2} {
			if err := tx.PutVariant(Variant{Seq: seq, ID: "id" + strconv.Itoa(int(seq)), Values: vals, Rendered: true}); err != nil {
				return err
			}
			for i := 1; i >= 0; i-- {
				if err := tx.PutJob(Job{Variant: seq, Index: i, Stage: "s" + strconv.Itoa(i), State: Pending}); err != nil {
					return err
				}
			}
		}
		return tx.PutPointKey("values:a=1", 2)
	})
	if err != nil {
		t.Fatal(err)
	}
	var order []string
	err = st.View(func(tx *Tx) error {
		if seq, ok := tx.PointKey("values:a=1"); !ok || seq != 2 {
			t.Errorf("point key -> %d %v", seq, ok)
		}
		if err := tx.Variants(func(v Variant) error {
			for i := range vals {
				if v.Values[i] != vals[i] {
					t.Errorf("value %d: %v != %v", i, v.Values[i], vals[i])
				}
			}
			order = append(order, v.ID)
			return nil
		}); err != nil {
			return err
		}
		return tx.Jobs(func(j Job) error {
			order = append(order, strconv.Itoa(int(j.Variant))+j.Stage)
			return nil
		})
	})
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(order, " "); got != "id1 id2 id3 1s0 1s1 2s0 2s1 3s0 3s1" {
		t.Errorf("order %q", got)
	}
}

// Ensure that a lingering store committing without pause does not keep
// another process's brief open waiting until its timeout: the waiter
// announces itself and the holder lets go after its next transaction.
func TestLingerLetsOthersIn(t *testing.T) {
	dir := t.TempDir()
	busy, err := Open(dir, Options{Brief: true, Linger: true})
	if err != nil {
		t.Fatal(err)
	}
	defer busy.Close()
	done := make(chan struct{})
	stopped := make(chan struct{})
	going := make(chan struct{})
	go func() {
		defer close(stopped)
		for i := 0; ; i++ {
			if i == 10 {
				close(going)
			}
			select {
			case <-done:
				return
			default:
			}
			if err := busy.Update(func(tx *Tx) error {
				return tx.PutJob(Job{Variant: 1, Index: 0, Stage: "s", State: Pending, Attempts: i})
			}); err != nil {
				t.Error(err)
				return
			}
		}
	}()
	select {
	case <-going:
	case <-stopped:
		t.FailNow()
	}
	// Without the announcement the holder keeps the file for as long as
	// it commits, and this open would fail after its timeout.
	other, err := Open(dir, Options{Brief: true, Timeout: 3 * time.Second})
	if err == nil {
		err = other.View(func(tx *Tx) error {
			_, _, err := tx.Job(1, 0)
			return err
		})
	}
	close(done)
	<-stopped
	if err != nil {
		t.Fatalf("brief open beside a lingering store: %v", err)
	}
}
