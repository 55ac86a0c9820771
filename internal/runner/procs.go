package runner

import (
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"time"

	"golang.org/x/sys/unix"
)

// Process bookkeeping on Linux. A stage's processes are found in two ways:
//
//   - by process group: the executor starts each stage as the leader of a
//     new process group, and stops it by signalling the whole group;
//   - by token: every process of a stage inherits SWEEP_JOB_TOKEN in its
//     environment, so a descendant that left the group (setsid, or a
//     daemonising helper) is still found by scanning /proc.
//
// The executor is a child subreaper (prctl PR_SET_CHILD_SUBREAPER), so a
// stage's descendants whose parent ends are re-parented to it rather than
// to init: it can see them as its own children, stop them and reap them.
// Processes are signalled through pidfds (pidfd_open, pidfd_send_signal),
// after checking that the process still carries the token, so a PID reused
// by an unrelated process between the scan and the signal is never hit.

// becomeSubreaper makes this process the reaper of its orphaned
// descendants. It fails on kernels without the feature (before Linux 3.4);
// the executor then works as before, minus the re-parenting.
func becomeSubreaper() error { return unix.Prctl(unix.PR_SET_CHILD_SUBREAPER, 1, 0, 0, 0) }

// hasToken reports whether process pid carries the job token in its
// environment.
func hasToken(pid int, token string) bool {
	env, err := os.ReadFile("/proc/" + strconv.Itoa(pid) + "/environ")
	if err != nil {
		return false
	}
	want := []byte(tokenEnv + "=" + token)
	for _, kv := range bytes.Split(env, []byte{0}) {
		if bytes.Equal(kv, want) {
			return true
		}
	}
	return false
}

// tokenProcesses scans /proc for processes carrying any of the tokens and
// returns their PIDs by token. The calling process is never included.
func tokenProcesses(tokens []string) map[string][]int {
	want := map[string]string{}
	for _, t := range tokens {
		want[tokenEnv+"="+t] = t
	}
	found := map[string][]int{}
	ents, err := os.ReadDir("/proc")
	if err != nil {
		return found
	}
	self := os.Getpid()
	for _, e := range ents {
		pid, err := strconv.Atoi(e.Name())
		if err != nil || pid == self {
			continue
		}
		env, err := os.ReadFile(filepath.Join("/proc", e.Name(), "environ"))
		if err != nil {
			continue
		}
		for _, kv := range bytes.Split(env, []byte{0}) {
			if t, ok := want[string(kv)]; ok {
				found[t] = append(found[t], pid)
				break
			}
		}
	}
	return found
}

// pidHandle is a process held by a pidfd, checked to carry a token.
type pidHandle struct {
	pid int
	fd  int
}

// openChecked opens pidfds for the PIDs that still carry the token.
func openChecked(pids []int, token string) []pidHandle {
	var hs []pidHandle
	for _, pid := range pids {
		fd, err := unix.PidfdOpen(pid, 0)
		if err != nil {
			continue // gone already
		}
		// Checked after the pidfd is open: the PID cannot be reused while
		// the pidfd is held, so the token read here is this process's.
		if !hasToken(pid, token) {
			unix.Close(fd)
			continue
		}
		hs = append(hs, pidHandle{pid, fd})
	}
	return hs
}

// stopProcesses sends SIGTERM to every process of the token among pids,
// waits up to grace for them to end, sends SIGKILL to the rest, and
// returns how many it signalled. Children of this process (re-parented to
// it as subreaper) are reaped.
func stopProcesses(pids []int, token string, grace time.Duration) int {
	hs := openChecked(pids, token)
	if len(hs) == 0 {
		return 0
	}
	for _, h := range hs {
		unix.PidfdSendSignal(h.fd, unix.SIGTERM, nil, 0)
	}
	deadline := time.Now().Add(grace)
	alive := hs
	for len(alive) > 0 && time.Now().Before(deadline) {
		fds := make([]unix.PollFd, len(alive))
		for i, h := range alive {
			fds[i] = unix.PollFd{Fd: int32(h.fd), Events: unix.POLLIN}
		}
		ms := int(time.Until(deadline) / time.Millisecond)
		unix.Poll(fds, max(ms, 1))
		reapChildren()
		var still []pidHandle
		for i, h := range alive {
			if fds[i].Revents&unix.POLLIN == 0 {
				still = append(still, h)
			}
		}
		alive = still
	}
	for _, h := range alive {
		unix.PidfdSendSignal(h.fd, unix.SIGKILL, nil, 0)
	}
	time.Sleep(20 * time.Millisecond)
	reapChildren()
	for _, h := range hs {
		unix.Close(h.fd)
	}
	return len(hs)
}

// tracked is set by the executor to say which children it waits for
// itself (through os/exec); reapChildren leaves those alone.
var tracked func(pid int) bool

// reapChildren collects the exit status of this process's children that
// have ended and that nothing else waits for: descendants of stages that
// were re-parented to the executor. It returns the PIDs of such children
// still alive.
func reapChildren() []int { return reap(childPIDs()) }

func reap(pids []int) []int {
	var alive []int
	for _, pid := range pids {
		if tracked != nil && tracked(pid) {
			continue
		}
		var ws unix.WaitStatus
		got, err := unix.Wait4(pid, &ws, unix.WNOHANG, nil)
		if err == nil && got == pid {
			continue
		}
		alive = append(alive, pid)
	}
	return alive
}

// childPIDs lists this process's children from
// /proc/self/task/*/children (every thread's list).
func childPIDs() []int {
	tasks, err := os.ReadDir("/proc/self/task")
	if err != nil {
		return nil
	}
	var pids []int
	for _, t := range tasks {
		pids = append(pids, threadChildren(t.Name())...)
	}
	return pids
}

// threadChildren lists the children of one thread of this process.
func threadChildren(tid string) []int {
	b, err := os.ReadFile(filepath.Join("/proc/self/task", tid, "children"))
	if err != nil {
		return nil
	}
	var pids []int
	for _, f := range strings.Fields(string(b)) {
		if pid, err := strconv.Atoi(f); err == nil {
			pids = append(pids, pid)
		}
	}
	return pids
}

// killGroup signals a process group, ignoring a group that is gone.
func killGroup(pgid int, sig syscall.Signal) { syscall.Kill(-pgid, sig) }
