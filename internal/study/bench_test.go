package study

import (
	"testing"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/store"
)

// BenchmarkStatus100k reads the status of a study of 100,000 variants
// (target: under a second).
func BenchmarkStatus100k(b *testing.B) {
	dir := b.TempDir()
	st, err := store.Open(dir, store.Options{})
	if err != nil {
		b.Fatal(err)
	}
	defer st.Close()
	err = st.Update(func(tx *store.Tx) error {
		tx.PutStudy(store.Study{ID: "bench", NextSeq: 100001, Params: []string{"a", "b", "c"}})
		for i := uint64(1); i <= 100000; i++ {
			v := store.Variant{Seq: i, ID: "00000000-0000-0000-0000-000000000000", Label: plan.Label(i), Rendered: true,
				Values: []store.Value{{Num: float64(i) * 0.001}, {Num: 3.5}, {Text: "round"}}}
			if err := tx.PutVariant(v); err != nil {
				return err
			}
			for s, name := range []string{"mesh", "solve"} {
				if err := tx.PutJob(store.Job{Variant: i, Stage: name, Index: s, State: store.Done, Attempts: 1}); err != nil {
					return err
				}
			}
		}
		return nil
	})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		rep, err := Status(st, "bench")
		if err != nil || rep.Counts.Done != 100000 {
			b.Fatalf("%v %+v", err, rep.Counts)
		}
	}
}
