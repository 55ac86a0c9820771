package runner

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/google/uuid"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/records"
	"github.com/sweep-cfd/sweep/internal/store"
)

// slurmCommand runs a Slurm command; tests may replace it.
var slurmCommand = exec.CommandContext

// ErrSlurm marks a Slurm command that failed or is missing.
var ErrSlurm = errors.New("slurm")

// slurm runs one Slurm command and returns its standard output. An error
// names the command and carries Slurm's own message.
func slurm(ctx context.Context, env []string, name string, args ...string) (string, error) {
	if _, err := exec.LookPath(name); err != nil {
		return "", fmt.Errorf("%w: %s not found on PATH: run on a machine with the Slurm client commands (a login node), or use the local backend", ErrSlurm, name)
	}
	cmd := slurmCommand(ctx, name, args...)
	if env != nil {
		cmd.Env = env
	}
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		msg := strings.TrimSpace(errb.String())
		if msg == "" {
			msg = err.Error()
		}
		return out.String(), fmt.Errorf("%w: %s %s: %s", ErrSlurm, name, strings.Join(args, " "), msg)
	}
	return out.String(), nil
}

// slurmState maps a Slurm job state onto what the runner does with it.
// It returns done (the job ended), ok (it ended well) and a reason.
func slurmState(state string) (done, ok bool, reason string) {
	switch strings.TrimRight(state, "+") {
	case "PENDING", "CONFIGURING", "RUNNING", "COMPLETING", "SUSPENDED", "REQUEUED", "REQUEUE_HOLD", "REQUEUE_FED", "RESIZING", "SIGNALING", "STAGE_OUT", "RESV_DEL_HOLD":
		return false, false, ""
	case "COMPLETED":
		return true, true, ""
	case "TIMEOUT":
		return true, false, "timed out (Slurm time limit)"
	case "OUT_OF_MEMORY":
		return true, false, "out of memory (Slurm)"
	case "NODE_FAIL":
		return true, false, "node failure (Slurm)"
	case "PREEMPTED":
		return true, false, "preempted (Slurm)"
	case "CANCELLED":
		return true, false, "cancelled in Slurm"
	case "BOOT_FAIL":
		return true, false, "node boot failure (Slurm)"
	case "DEADLINE":
		return true, false, "deadline reached (Slurm)"
	default: // FAILED and anything new
		return true, false, "failed in Slurm (" + strings.ToLower(state) + ")"
	}
}

// exitFile is where a batch script records its command's exit status, so
// the end of a job is known even after Slurm has forgotten it.
func exitFile(variantDir, token string) string {
	return filepath.Join(variantDir, ".sweep-exit-"+token)
}

// batchScript writes a job's batch script. Only validated recipe values
// reach its text (the backend's options, the stage's command words, which
// the recipe wrote); parameter values travel in the environment that
// sbatch exports to the job.
func batchScript(r *recipe.Recipe, s recipe.Stage, vdir, token string, again bool) string {
	var b strings.Builder
	b.WriteString("#!/bin/sh\n")
	fmt.Fprintf(&b, "#SBATCH --job-name=sweep-%s\n", token)
	fmt.Fprintf(&b, "#SBATCH --output=%s\n", shellQuote(filepath.Join(vdir, s.Name+".log")))
	b.WriteString("#SBATCH --open-mode=append\n")
	fmt.Fprintf(&b, "#SBATCH --chdir=%s\n", shellQuote(filepath.Join(vdir, s.Dir)))
	fmt.Fprintf(&b, "#SBATCH --ntasks=1\n#SBATCH --cpus-per-task=%d\n", s.Cores)
	be := r.Backend
	if be.Nodes > 0 {
		fmt.Fprintf(&b, "#SBATCH --nodes=%d\n", be.Nodes)
	}
	for _, kv := range [][2]string{{"partition", be.Partition}, {"account", be.Account}, {"qos", be.QOS}, {"mem", be.Memory}} {
		if kv[1] != "" {
			fmt.Fprintf(&b, "#SBATCH --%s=%s\n", kv[0], kv[1])
		}
	}
	if s.Timeout > 0 {
		secs := int(math.Ceil(s.Timeout.Seconds()))
		fmt.Fprintf(&b, "#SBATCH --time=%d:%02d\n", secs/60, secs%60)
	}
	for _, x := range be.Extra {
		fmt.Fprintf(&b, "#SBATCH %s\n", x)
	}
	fmt.Fprintf(&b, "echo \"=== sweep: stage %s of $SWEEP_VARIANT_LABEL, Slurm job $SLURM_JOB_ID on $(hostname), started $(date) ===\"\n", s.Name)
	argv := s.Argv
	if again && s.ContinueArgv != nil {
		argv = s.ContinueArgv
	}
	if argv[0] == recipe.SelfProgram && !s.Shell {
		argv = append([]string{"$SWEEP_BIN"}, argv[1:]...)
	}
	words := make([]string, len(argv))
	for i, a := range argv {
		if i == 0 && a == "$SWEEP_BIN" {
			words[i] = `"$SWEEP_BIN"`
			continue
		}
		words[i] = shellQuote(a)
	}
	b.WriteString(strings.Join(words, " ") + "\n")
	fmt.Fprintf(&b, "code=$?\necho $code > %s\nexit $code\n", shellQuote(exitFile(vdir, token)))
	return b.String()
}

// shellQuote quotes a word for sh with single quotes.
func shellQuote(s string) string {
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// slurmRun drives the study's queue through Slurm.
type slurmRun struct {
	d      *dispatcher
	ctx    context.Context
	detach bool
}

// RunSlurm runs the study's queue on a Slurm cluster: every ready variant's
// remaining stages are submitted with sbatch as a chain (afterok), their
// ids committed to the study database at once, and squeue is polled (one
// call per interval for all the study's jobs) until every job is done or
// failed; failed stages are resubmitted as the recipe's retries allow.
// With detach it submits what is ready, takes one look at the queue and
// returns. Cancelling ctx leaves the submitted jobs to Slurm: a later run
// (or `sweep status --refresh`) picks them up, `sweep cancel` ends them.
func RunSlurm(ctx context.Context, r *recipe.Recipe, opts Options, detach bool) (*Snapshot, error) {
	if opts.Progress == nil {
		opts.Progress = nopProgress{}
	}
	if opts.Cores <= 0 {
		opts.Cores = 1 << 20 // Slurm decides; no local budget
	}
	for _, name := range []string{"sbatch", "squeue", "scancel"} {
		if _, err := exec.LookPath(name); err != nil {
			return nil, fmt.Errorf("%w: %s not found on PATH: run on a machine with the Slurm client commands (a login node), or use the local backend", ErrSlurm, name)
		}
	}
	if err := r.CheckCommands(); err != nil {
		return nil, err
	}
	st, err := store.OpenExisting(r.Dir, store.Options{Brief: true})
	if err != nil {
		return nil, err
	}
	defer st.Close()
	q, err := load(st, r)
	if err != nil {
		return nil, err
	}
	exe := opts.Executable
	if exe == "" {
		if exe, err = os.Executable(); err != nil {
			return nil, err
		}
	}
	d := &dispatcher{r: r, st: st, q: q, opts: opts, exe: exe, running: map[string]*active{}, start: time.Now()}
	sr := &slurmRun{d: d, ctx: ctx, detach: detach}
	if err := sr.adopt(); err != nil {
		return nil, err
	}
	err = sr.loop()
	snap := d.snapshot()
	opts.Progress.Update(snap)
	return &snap, err
}

// adopt takes over jobs an earlier run submitted: those with a Slurm id
// are watched again; those whose submission was intended but whose id was
// never recorded are looked up by job name, or re-queued.
func (sr *slurmRun) adopt() error {
	d := sr.d
	var fix []*store.Job
	for _, vs := range d.q.all {
		for _, j := range vs.jobs {
			if j.State != store.Running {
				continue
			}
			if j.SlurmID == "" {
				out, err := slurm(sr.ctx, nil, "squeue", "-h", "-t", "all", "-n", "sweep-"+j.Token, "-o", "%i")
				if err != nil {
					return err
				}
				if id := strings.TrimSpace(out); id != "" {
					j.SlurmID = strings.Fields(id)[0]
				} else {
					j.State, j.Token, j.Interrupts = store.Pending, "", j.Interrupts+1
					j.Reason = "its submission was interrupted; re-queued"
					fix = append(fix, j)
					continue
				}
				fix = append(fix, j)
			}
			d.running[j.Token] = &active{job: j, vs: vs, stage: d.r.Stages[j.Index]}
		}
	}
	// Variants whose chain is in Slurm are not ready to submit again.
	d.q.ready = d.q.ready[:0]
	for _, vs := range d.q.all {
		if sr.readyToSubmit(vs) {
			d.q.ready = append(d.q.ready, vs)
		}
	}
	if len(fix) > 0 {
		return d.commit(fix)
	}
	return nil
}

// readyToSubmit reports whether a variant has pending stages and none in
// Slurm or failed.
func (sr *slurmRun) readyToSubmit(vs *vstate) bool {
	pending := false
	for _, j := range vs.jobs {
		switch j.State {
		case store.Running, store.Failed:
			return false
		case store.Pending:
			pending = true
		}
	}
	return pending
}

func (sr *slurmRun) loop() error {
	d := sr.d
	tick := time.NewTicker(d.r.Backend.Poll)
	defer tick.Stop()
	for {
		if err := sr.submitReady(); err != nil {
			return err
		}
		if err := sr.poll(); err != nil {
			return err
		}
		d.show(true)
		if len(d.running) == 0 && len(d.q.ready) == 0 {
			return nil
		}
		if sr.detach {
			d.opts.Progress.Event(fmt.Sprintf("%d jobs are in Slurm; `sweep run %s` or `sweep status %s --refresh` picks them up", len(d.running), d.r.Dir, d.r.Dir))
			return nil
		}
		select {
		case <-sr.ctx.Done():
			d.opts.Progress.Event("stopped watching; the submitted jobs go on in Slurm (`sweep cancel` ends them)")
			return ErrInterrupted
		case <-tick.C:
		}
	}
}

// submitReady submits the remaining stages of every ready variant as an
// afterok chain: the intent (state running, a token that names the job)
// is committed first, each id right after its sbatch.
func (sr *slurmRun) submitReady() error {
	d := sr.d
	for len(d.q.ready) > 0 {
		vs := d.q.ready[0]
		d.q.ready = d.q.ready[1:]
		var chain []*store.Job
		for _, j := range vs.jobs {
			if j.State == store.Pending {
				j.State, j.Token, j.SlurmID, j.Reason = store.Running, uuid.NewString()[:13], "", ""
				j.Started, j.Ended, j.Cores = time.Now().UTC(), time.Time{}, d.r.Stages[j.Index].Cores
				chain = append(chain, j)
			}
		}
		if err := d.commit(chain); err != nil {
			return err
		}
		vdir := plan.Dir(d.r.Dir, vs.v.Label)
		prev := ""
		for k, j := range chain {
			s := d.r.Stages[j.Index]
			script := filepath.Join(vdir, ".sweep-"+s.Name+".sbatch")
			if err := os.WriteFile(script, []byte(batchScript(d.r, s, vdir, j.Token, j.Attempts > 0 || j.Interrupts > 0)), 0o644); err != nil {
				return sr.unsubmit(chain[k:], err)
			}
			args := []string{"--parsable"}
			if prev != "" {
				args = append(args, "--dependency=afterok:"+prev)
			}
			args = append(args, script)
			env := append(os.Environ(), d.r.Env(records.RecipeValues(vs.v.Values), vs.v.ID, vs.v.Label, vdir, s)...)
			env = append(env, recipe.EnvPrefix+"BIN="+d.exe, tokenEnv+"="+j.Token)
			out, err := slurm(sr.ctx, env, "sbatch", args...)
			if err != nil {
				return sr.unsubmit(chain[k:], err)
			}
			id, _, _ := strings.Cut(strings.TrimSpace(out), ";")
			j.SlurmID = id
			if err := d.commit([]*store.Job{j}); err != nil {
				return err
			}
			d.running[j.Token] = &active{job: j, vs: vs, stage: s}
			prev = id
		}
		d.opts.Progress.Event(fmt.Sprintf("%s: submitted %d stage(s) to Slurm (job %s)", vs.v.Label, len(chain), chain[0].SlurmID))
	}
	return nil
}

// unsubmit puts back jobs whose submission failed, so the study's state
// stays true: nothing is recorded as in Slurm that is not.
func (sr *slurmRun) unsubmit(jobs []*store.Job, cause error) error {
	for _, j := range jobs {
		j.State, j.Token, j.SlurmID = store.Pending, "", ""
	}
	if err := sr.d.commit(jobs); err != nil {
		return errors.Join(cause, err)
	}
	return cause
}

// poll asks squeue once about all of the study's jobs in Slurm and records
// those that ended.
func (sr *slurmRun) poll() error {
	d := sr.d
	if len(d.running) == 0 {
		return nil
	}
	ids := make([]string, 0, len(d.running))
	byID := map[string]*active{}
	for _, a := range d.running {
		ids = append(ids, a.job.SlurmID)
		byID[a.job.SlurmID] = a
	}
	out, err := slurm(sr.ctx, nil, "squeue", "-h", "-t", "all", "-j", strings.Join(ids, ","), "-o", "%i|%T|%r")
	if err != nil && !strings.Contains(err.Error(), "Invalid job id") {
		return err
	}
	states := map[string][2]string{}
	for _, line := range strings.Split(out, "\n") {
		f := strings.Split(strings.TrimSpace(line), "|")
		if len(f) == 3 {
			states[f[0]] = [2]string{f[1], f[2]}
		}
	}
	var changed []*store.Job
	var touched []*active
	var cancel []string
	for id, a := range byID {
		touched = append(touched, a)
		stt, known := states[id]
		vdir := plan.Dir(d.r.Dir, a.vs.v.Label)
		var ended, ok bool
		var reason string
		if known {
			if stt[1] == "DependencyNeverSatisfied" {
				// An earlier stage failed: this one will never run.
				cancel = append(cancel, id)
				delete(d.running, a.job.Token)
				a.job.State, a.job.Token, a.job.SlurmID, a.job.Reason = store.Pending, "", "", "an earlier stage failed"
				changed = append(changed, a.job)
				continue
			}
			ended, ok, reason = slurmState(stt[0])
		} else {
			// Slurm has forgotten the job: its exit file tells.
			b, err := os.ReadFile(exitFile(vdir, a.job.Token))
			ended = true
			if err != nil {
				reason = "lost: Slurm no longer knows the job and it left no exit status"
			} else if code, _ := strconv.Atoi(strings.TrimSpace(string(b))); code == 0 {
				ok = true
			} else {
				a.job.ExitCode, reason = code, fmt.Sprintf("exit status %d", code)
			}
		}
		if !ended {
			if stt[0] == "RUNNING" {
				sr.settleCheck(a, vdir)
			}
			continue
		}
		delete(d.running, a.job.Token)
		j := a.job
		j.Ended = time.Now().UTC()
		d.finished++
		if ok || (a.job.Settled != "" && reason == "cancelled in Slurm") {
			j.State, j.Reason, j.Attempts = store.Done, "", j.Attempts+1
			changed = append(changed, j)
			continue
		}
		if b, err := os.ReadFile(exitFile(vdir, j.Token)); err == nil && reason == "failed in Slurm (failed)" {
			code, _ := strconv.Atoi(strings.TrimSpace(string(b)))
			j.ExitCode, reason = code, fmt.Sprintf("exit status %d", code)
		}
		j.Attempts++
		j.SlurmID = ""
		if j.Attempts <= a.stage.Retries {
			j.State, j.Reason = store.Pending, reason+"; retried"
			d.opts.Progress.Event(fmt.Sprintf("%s %s: %s; resubmitting (attempt %d of %d)", a.vs.v.Label, j.Stage, reason, j.Attempts+1, a.stage.Retries+1))
		} else {
			j.State, j.Reason = store.Failed, reason
			j.Tail = attemptTail(filepath.Join(vdir, a.stage.Name+".log"), 20)
			d.opts.Progress.Event(fmt.Sprintf("%s %s failed: %s", a.vs.v.Label, j.Stage, reason))
		}
		changed = append(changed, j)
	}
	if len(cancel) > 0 {
		slurm(sr.ctx, nil, "scancel", cancel...)
	}
	if len(changed) > 0 {
		if err := d.commit(changed); err != nil {
			return err
		}
	}
	// A variant whose chain ended with stages left (a retry, the stages
	// after a failure) is ready again, unless a stage failed for good or
	// one is still in Slurm (readyToSubmit); only variants with a job
	// that changed in this poll can have become ready.
	seen := map[*vstate]bool{}
	for _, x := range d.q.ready {
		seen[x] = true
	}
	for _, a := range touched {
		if !seen[a.vs] && sr.readyToSubmit(a.vs) {
			seen[a.vs] = true
			d.q.ready = append(d.q.ready, a.vs)
		}
	}
	return nil
}

// settleCheck checks a running job's averages at each poll and, once they
// have converged, asks it to stop: by a signal through scancel, by the
// stop file on the shared filesystem, or by the recipe's command.
func (sr *slurmRun) settleCheck(a *active, vdir string) {
	es := a.stage.Settle
	if es == nil || a.job.Settled != "" || time.Since(a.lastCheck) < es.Every {
		return
	}
	a.lastCheck = time.Now()
	c := settleCheck(sr.d.r, vdir, es)
	if c.err != nil || !c.stop {
		return
	}
	a.job.Settled = "stopped early: " + c.reason
	a.job.SettledAt = c.at
	a.job.Stopping = store.StopSettle
	if err := sr.d.commit([]*store.Job{a.job}); err != nil {
		a.job.Settled, a.job.SettledAt, a.job.Stopping = "", nil, ""
		sr.d.opts.Progress.Event(fmt.Sprintf("%s %s: cannot record that its averages settled (%v); it runs on", a.vs.v.Label, a.stage.Name, err))
		return
	}
	dir := filepath.Join(vdir, a.stage.Dir)
	var err error
	switch es.By {
	case "signal":
		_, err = slurm(sr.ctx, nil, "scancel", "--signal="+es.Signal, "--full", a.job.SlurmID)
	case "file":
		err = os.WriteFile(filepath.Join(dir, es.File), []byte("stop requested by sweep: averages converged\n"), 0o644)
	case "command":
		cmd := exec.CommandContext(sr.ctx, es.Command[0], es.Command[1:]...)
		cmd.Dir = dir
		err = cmd.Run()
	}
	if err != nil {
		sr.d.opts.Progress.Event(fmt.Sprintf("%s %s: the settle stop failed: %v", a.vs.v.Label, a.stage.Name, err))
		return
	}
	sr.d.opts.Progress.Event(fmt.Sprintf("%s %s: averages converged, stopping it (%s)", a.vs.v.Label, a.stage.Name, c.reason))
}

// CancelSlurm cancels every job of the study that is in Slurm (one scancel
// call) and re-queues them as interrupted. It returns how many it
// cancelled. The caller holds the study lock.
func CancelSlurm(ctx context.Context, st *store.Store) (int, error) {
	var ids []string
	var jobs []store.Job
	err := st.View(func(tx *store.Tx) error {
		return tx.Jobs(func(j store.Job) error {
			if j.State == store.Running && j.SlurmID != "" {
				ids = append(ids, j.SlurmID)
				jobs = append(jobs, j)
			}
			return nil
		})
	})
	if err != nil || len(ids) == 0 {
		return 0, err
	}
	if _, err := slurm(ctx, nil, "scancel", ids...); err != nil {
		return 0, err
	}
	err = st.Update(func(tx *store.Tx) error {
		for _, j := range jobs {
			j.State, j.Token, j.SlurmID, j.Interrupts, j.Reason = store.Pending, "", "", j.Interrupts+1, "cancelled by sweep cancel"
			if err := tx.PutJob(j); err != nil {
				return err
			}
		}
		return nil
	})
	return len(ids), err
}
