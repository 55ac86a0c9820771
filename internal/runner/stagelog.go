package runner

import (
	"bufio"
	"bytes"
	"errors"
	"io"
	"os"
	"regexp"
	"strconv"
	"time"
)

// A stage's log (variants/<label>/<stage>.log) holds the output of every
// run of the stage, each between markers the program writes:
//
//	=== sweep: stage solve of v003, attempt 2, started 2026-12-02 10:00:00, token T ===
//	... the solver's output ...
//	=== sweep: averages settled at 2026-12-02 10:40:00 (drag ...); asking the solver to stop ===
//	=== sweep: ended 2026-12-02 10:40:03: exit status 0, stopped by sweep, token T ===
//
// The first comes from the runner before the start, the second from the
// runner once a settle stop is committed, the last from the executor when
// the stage's process has ended. They let `sweep recover` prove, from the
// log alone, which runs finished.

const logStamp = time.DateTime

// Attempt is what a stage log says about one run of the stage.
type Attempt struct {
	Number    int
	Continued bool
	Token     string
	Started   time.Time
	Settled   bool // the runner recorded that its averages settled
	Ended     bool // the executor recorded its end
	EndTime   time.Time
	Outcome   string // "exit status 0", "killed by signal: terminated", ...
	Stopped   bool   // the program stopped it (the end says nothing about the work)
}

// Finished reports whether the run is proven to have finished its work:
// it ended by itself with status 0, or it was stopped because its
// averages had settled.
func (a Attempt) Finished() bool {
	return a.Ended && (a.Settled || (a.Outcome == "exit status 0" && !a.Stopped))
}

var (
	headerRE = regexp.MustCompile(`^=== sweep: stage \S+ of \S+, (continued, )?attempt (\d+), started ([0-9-]+ [0-9:]+), token (\S+) ===$`)
	settleRE = regexp.MustCompile(`^=== sweep: averages settled at `)
	footerRE = regexp.MustCompile(`^=== sweep: ended ([0-9-]+ [0-9:]+): (.*?)(, stopped by sweep)?, token (\S+) ===$`)
)

// ReadStageLog reads the runs recorded in a stage log, oldest first.
func ReadStageLog(path string) ([]Attempt, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var out []Attempt
	rd := bufio.NewReaderSize(f, 64<<10)
	prefix := []byte("=== sweep: ")
	for {
		line, err := rd.ReadSlice('\n')
		if errors.Is(err, bufio.ErrBufferFull) {
			// A very long line of solver output: skip the rest of it.
			for errors.Is(err, bufio.ErrBufferFull) {
				_, err = rd.ReadSlice('\n')
			}
			continue
		}
		if bytes.HasPrefix(line, prefix) {
			s := string(bytes.TrimRight(line, "\r\n"))
			switch {
			case headerRE.MatchString(s):
				m := headerRE.FindStringSubmatch(s)
				n, _ := strconv.Atoi(m[2])
				t, _ := time.ParseInLocation(logStamp, m[3], time.Local)
				out = append(out, Attempt{Number: n, Continued: m[1] != "", Started: t, Token: m[4]})
			case settleRE.MatchString(s) && len(out) > 0:
				out[len(out)-1].Settled = true
			case footerRE.MatchString(s) && len(out) > 0:
				m := footerRE.FindStringSubmatch(s)
				a := &out[len(out)-1]
				if m[4] == a.Token {
					t, _ := time.ParseInLocation(logStamp, m[1], time.Local)
					a.Ended, a.EndTime, a.Outcome, a.Stopped = true, t, m[2], m[3] != ""
				}
			}
		}
		if err != nil {
			if errors.Is(err, io.EOF) {
				return out, nil
			}
			return out, err
		}
	}
}
