// Package runner runs a study's stage jobs from its persistent queue on
// the local machine's cores.
//
// # Crash safety
//
// The study database is the truth. The runner commits the intent to start
// a job (state running, with a fresh token) before it starts the job, and
// commits the job's end before it acts on it (starting the next stage,
// retrying). Processes are started and waited for by a small executor
// process (the same binary, started with SWEEP_EXECUTOR set), in its own
// process group, so a runner killed at any instant, even by SIGKILL,
// loses nothing:
//
//   - a job that ended but whose end was not yet committed is written by
//     the executor to .sweep/exits (fsynced) when it sees the runner gone,
//     and the next run commits it: a finished job is never run twice;
//   - jobs still running are stopped by the executor (SIGTERM to the
//     process group, SIGKILL after a grace period) and the next run
//     re-queues them as interrupted, not failed: no job is lost.
//
// The next run waits for the previous executor to finish this cleanup (it
// holds .sweep/executor.lock while alive), and as a last resort stops any
// process still carrying a lost job's token in its environment.
package runner
