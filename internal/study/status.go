package study

import (
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/records"
	"github.com/sweep-cfd/sweep/internal/runner"
	"github.com/sweep-cfd/sweep/internal/store"
)

// VariantStatus is one variant's line in a status report.
type VariantStatus struct {
	Seq    uint64         `json:"-"`
	ID     string         `json:"id"`
	Label  string         `json:"label"`
	Name   string         `json:"name,omitempty"`
	State  store.State    `json:"state"`
	Params map[string]any `json:"params"`
	Values []recipe.Value `json:"-"`
	Stage  string         `json:"stage,omitempty"`  // the stage running, failed or next
	Reason string         `json:"reason,omitempty"` // why it failed or was re-queued
	// Orphaned marks a running variant whose stage nothing watches: no
	// run holds the study and no executor runs the stage (it ended with
	// its machine, say); the next `sweep run` re-queues it.
	Orphaned bool        `json:"orphaned,omitempty"`
	Jobs     []store.Job `json:"-"`
}

// Counts counts variants by state. Scripts read these names.
type Counts struct {
	Done    int `json:"done"`
	Failed  int `json:"failed"`
	Pending int `json:"pending"`
	Running int `json:"running"`
}

// Report is a study's status.
type Report struct {
	Study    string          `json:"study"`
	Params   []string        `json:"param_names"`
	Counts   Counts          `json:"counts"`
	Variants []VariantStatus `json:"variants"`
	// RunActive: a process holds the study (a run, or a plan or reset).
	// ExecutorAlive: the study's executor runs, so its stages do even
	// without a run attached (the next `sweep run` takes them over).
	RunActive     bool `json:"run_active"`
	ExecutorAlive bool `json:"executor_alive"`
}

// Status reads the study's variants and their states. A running variant
// is orphaned when nothing watches its stage: no process holds the study
// and the study's executor is not alive (the rule text and JSON share).
func Status(st *store.Store, name string) (*Report, error) {
	rep := &Report{Study: name}
	idx := map[uint64]int{}
	err := st.View(func(tx *store.Tx) error {
		s, _, err := tx.Study()
		if err != nil {
			return err
		}
		rep.Params = s.Params
		if s.NextSeq > 1 {
			rep.Variants = make([]VariantStatus, 0, s.NextSeq-1)
		}
		if err := tx.Variants(func(v store.Variant) error {
			if !v.Rendered {
				return nil
			}
			params := make(map[string]any, len(v.Values))
			for i, val := range v.Values {
				if i < len(s.Params) {
					if val.Text != "" {
						params[s.Params[i]] = val.Text
					} else {
						params[s.Params[i]] = val.Num
					}
				}
			}
			idx[v.Seq] = len(rep.Variants)
			rep.Variants = append(rep.Variants, VariantStatus{Seq: v.Seq, ID: v.ID, Label: v.Label, Name: v.Name, Params: params, Values: records.RecipeValues(v.Values)})
			return nil
		}); err != nil {
			return err
		}
		return tx.Jobs(func(j store.Job) error {
			if i, ok := idx[j.Variant]; ok {
				rep.Variants[i].Jobs = append(rep.Variants[i].Jobs, j)
			}
			return nil
		})
	})
	if err != nil {
		return nil, err
	}
	rep.RunActive = store.Held(st.StudyDir())
	rep.ExecutorAlive = runner.ExecutorAlive(st.StudyDir())
	for i := range rep.Variants {
		vs := &rep.Variants[i]
		ptrs := make([]*store.Job, len(vs.Jobs))
		for k := range vs.Jobs {
			ptrs[k] = &vs.Jobs[k]
		}
		vs.State = runner.VariantState(ptrs)
		for _, j := range vs.Jobs {
			if j.State != store.Done {
				vs.Stage, vs.Reason = j.Stage, j.Reason
				break
			}
		}
		if vs.State == store.Running && !rep.RunActive && !rep.ExecutorAlive {
			for _, j := range vs.Jobs {
				if j.State == store.Running && j.SlurmID == "" {
					vs.Orphaned = true
				}
			}
		}
		switch vs.State {
		case store.Done:
			rep.Counts.Done++
		case store.Failed:
			rep.Counts.Failed++
		case store.Running:
			rep.Counts.Running++
		default:
			rep.Counts.Pending++
		}
	}
	return rep, nil
}
