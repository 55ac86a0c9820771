// Package runner runs a study's stage jobs from its persistent queue on
// the local machine's cores (and, in slurm.go, through Slurm).
//
// # Crash safety
//
// The study database is the truth. The runner commits the intent to start
// a job (state running, with a fresh token) before it starts the job,
// commits the reason for stopping a job (Ctrl-C, a timeout, settled
// averages) before it sends the stop, and commits the job's end before it
// acts on it (starting the next stage, retrying).
//
// Processes are started and waited for by the study's executor: this same
// binary, started with SWEEP_EXECUTOR set, in a session of its own, and
// reached over a Unix socket in .sweep/. It outlives its runner, so a
// runner that dies at any instant, even by SIGKILL, costs no solver time:
//
//   - the stages keep running; the executor keeps each end in memory and
//     in its journal (.sweep/exits) until a runner has committed it;
//   - the next `sweep run` connects to the same executor, commits the ends
//     that happened meanwhile, and takes the running stages over without
//     interrupting them.
//
// When the executor is gone too (a reboot), the next run commits the ends
// its journal holds, stops any process still carrying a lost job's token
// in its environment (checked through a pidfd, so a reused PID is never
// hit), and re-queues the rest. Every end is judged by one rule
// (judgeEnd): a run the program caused to stop is an interruption
// whatever its exit status, unless its averages had settled or it timed
// out.
//
// A stage's processes are its own process group, plus any descendant that
// carries its token; the executor is a child subreaper, so descendants
// that leave the group with setsid are re-parented to it and stopped with
// their stage (procs.go).
package runner
