package study

import (
	"context"
	"errors"
	"os"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/runner"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/studytest"
)

// The test binary doubles as the executor, as the sweep binary does.
func TestMain(m *testing.M) {
	if runner.IsExecutor() {
		os.Exit(runner.ExecutorMain())
	}
	os.Exit(m.Run())
}

// planned writes and plans a study of three variants whose stage writes a
// steady history of drag k and lift 2k.
func planned(t *testing.T) string {
	t.Helper()
	dir := studytest.Write(t, "", studytest.Levels(3, `[[quantity]]
name = "drag"
files = "h.dat"
value = 2
better = "lower"
[[quantity]]
name = "lift"
files = "h.dat"
value = 3
[[stage]]
name = "solve"
shell = true
run = "awk -v k=$SWEEP_PARAM_K 'BEGIN { for (i = 0; i < 200; i++) printf \"%d %.6f %.6f\\n\", i, k, 2 * k }' > h.dat"
`), studytest.CaseFiles())
	if _, err := Plan(context.Background(), dir, PlanOptions{}); err != nil {
		t.Fatal(err)
	}
	return dir
}

// Ensure that what a user gets wrong in a call is a UsageError that says
// what to do: an unknown quantity, a quantity without a direction in a
// trade-off, several where one is taken, a baseline that is no variant,
// and a batch size out of range; and that a directory never planned says
// so.
func TestUsageErrors(t *testing.T) {
	dir := planned(t)
	s, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	ctx := context.Background()
	for _, c := range []struct {
		err  error
		want string
	}{
		{func() error { _, err := s.Objectives("side", false); return err }(), `no quantity "side" in the recipe (declared: drag, lift)`},
		{func() error { _, err := s.Objectives("drag,lift", true); return err }(), `quantity "lift" (study.toml:`},
		{func() error { _, err := s.Objectives("drag,lift", false); return err }(), `--quantity "drag,lift" names 2 quantities; this command takes one`},
		{func() error { _, err := s.Rank(ctx, RankOptions{Baseline: "v009"}); return err }(), `no variant "v009" in the study`},
		{func() error { _, err := Plan(ctx, dir, PlanOptions{Add: 1001}); return err }(), `--add takes 1 to 1000 new variants at a time`},
	} {
		var ue UsageError
		if !errors.As(c.err, &ue) || !strings.Contains(c.err.Error(), c.want) {
			t.Errorf("got %v, want a usage error containing %q", c.err, c.want)
		}
	}
	if _, _, err := StatusOf(t.TempDir()); !errors.Is(err, store.ErrNoStudy) {
		t.Errorf("status of an empty directory: %v", err)
	}
}

// Ensure that the workflows run end to end on a small study: a run, a
// harvest that judges every variant steady, a ranking by drag, a report
// model with the variants' histories and the ranking and no trade-off (one
// quantity says which values are better), and the status.
func TestWorkflows(t *testing.T) {
	dir := planned(t)
	ctx := context.Background()
	snap, err := Run(ctx, dir, RunOptions{Backend: "local", Cores: 2})
	if err != nil || snap.Done != 3 {
		t.Fatalf("run: %v %+v", err, snap)
	}
	s, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	h, err := s.Harvest(ctx, HarvestOptions{})
	if err != nil || len(h.Variants) != 3 || len(h.Running) != 0 {
		t.Fatalf("harvest: %v %+v", err, h)
	}
	for _, v := range h.Variants {
		if r := v.Results["drag"]; r.Verdict != "steady" {
			t.Errorf("%s: drag %+v", v.Label, r)
		}
	}
	rk, err := s.Rank(ctx, RankOptions{})
	if err != nil || rk.Ranking == nil || rk.Ranking.Rows[0].Label != "v001" {
		t.Fatalf("rank: %v %+v", err, rk)
	}
	m, err := s.Model(ctx, ReportOptions{})
	if err != nil || len(m.Ranking) != 3 || len(m.Variants) != 3 || len(m.Variants[0].Quantities) != 2 || len(m.Variants[0].Quantities[0].Time) != 200 {
		t.Fatalf("report model: %v", err)
	}
	if m.Tradeoff != nil {
		t.Errorf("a trade-off with one directed quantity")
	}
	st, err := s.Status()
	if err != nil || st.Counts.Done != 3 || st.Variants[0].Orphaned {
		t.Errorf("status %+v, %v", st, err)
	}
}
