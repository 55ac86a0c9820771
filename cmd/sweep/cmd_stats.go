package main

import (
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/history"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type statsOptions struct {
	column  string
	time    string
	comment string
	abs     float64
	rel     float64
	start   float64
	json    bool
	csv     bool
}

func newStatsCmd() *cobra.Command {
	var opts statsOptions
	cmd := &cobra.Command{
		Use:   "stats FILE",
		Short: "Has my run converged? Analyse one history file",
		Long: `stats reads one history file (whitespace or comma separated columns; lines
starting with the comment marker are comments, the last of them naming the
columns), removes the initial transient (MSER-5), and prints the mean of a
column with its 95 % confidence interval, the samples and effective samples
used, the time where averaging starts, the shedding period when there is
one, and a verdict against the tolerance.`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{errors.New("stats needs one history file, for example: sweep stats forces.dat --column Cd")}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			q := history.Quantity{Files: globEscape(filepath.Base(args[0])), Comment: opts.comment}
			if err := q.Time.UnmarshalTOML(opts.time); err != nil {
				return usageError{fmt.Errorf("--time: %w", err)}
			}
			var t history.Term
			if err := t.UnmarshalTOML(opts.column); err != nil {
				return usageError{fmt.Errorf("--column: %w", err)}
			}
			q.Value = []history.Term{t}
			o := harvest.Options{Abs: opts.abs, Rel: opts.rel}
			if cmd.Flags().Changed("start") {
				o.Start = &opts.start
			}
			if o.Abs < 0 || o.Rel < 0 {
				return usageError{errors.New("tolerances cannot be negative")}
			}
			res, err := harvest.Harvest(filepath.Dir(args[0]), q, o)
			out := cmd.OutOrStdout()
			if opts.json {
				if jerr := ui.JSON(out, res); jerr != nil {
					return jerr
				}
			} else if opts.csv {
				f := ui.CSVNumber
				if cerr := ui.CSV(out, [][]string{
					{"file", "column", "mean", "half_width", "samples", "effective_samples", "transient_end", "period", "verdict"},
					{args[0], opts.column, f(res.Mean), f(res.HalfWidth), strconv.Itoa(res.Samples), f(res.EffectiveSamples), f(res.TransientEnd), f(res.Period), string(res.Verdict)},
				}); cerr != nil {
					return cerr
				}
			} else {
				printStats(out, args[0], opts.column, res)
			}
			if err != nil {
				return err
			}
			if res.Verdict == harvest.Failed || res.Verdict == harvest.NoData {
				return fmt.Errorf("no usable average: %s", res.Message)
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&opts.column, "column", "2", "the column to average: a 1-based index or a header name")
	cmd.Flags().StringVar(&opts.time, "time", "1", "the time column: a 1-based index or a header name")
	cmd.Flags().StringVar(&opts.comment, "comment", "#", "the comment marker")
	cmd.Flags().Float64Var(&opts.abs, "tolerance", 0, "absolute tolerance on the 95% half-width")
	cmd.Flags().Float64Var(&opts.rel, "relative-tolerance", 0, "tolerance on the half-width relative to |mean| (default 0.01 when no tolerance is given)")
	cmd.Flags().Float64Var(&opts.start, "start", 0, "average from this time on instead of detecting the transient")
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the analysis as JSON")
	cmd.Flags().BoolVar(&opts.csv, "csv", false, "print the analysis as one CSV row")
	return cmd
}

// globEscape quotes the characters filepath.Match treats specially, so a
// file name is matched literally.
func globEscape(s string) string {
	r := strings.NewReplacer(`\`, `\\`, `*`, `\*`, `?`, `\?`, `[`, `\[`)
	return r.Replace(s)
}

func printStats(w interface{ Write([]byte) (int, error) }, file, column string, r harvest.Result) {
	fmt.Fprintf(w, "%s, column %s\n", file, column)
	if r.Verdict == harvest.Failed || r.Verdict == harvest.NoData {
		fmt.Fprintf(w, "  verdict        %s: %s\n", r.Verdict, r.Message)
		return
	}
	rows := [][]string{
		{"  mean", ui.PlusMinus(r.Mean, r.HalfWidth) + fmt.Sprintf("  (%.0f%% confidence interval; tolerance %s)", 100*r.Confidence, ui.Number(r.Tolerance))},
	}
	switch r.Method {
	case "cycles":
		rows = append(rows, []string{"  averaged over", fmt.Sprintf("%d whole cycles of %s (%d samples), in %d batches", r.Periods, ui.Number(r.Period), r.Samples, r.Batches)})
	case "bound":
		rows = append(rows, []string{"  settled", fmt.Sprintf("the last %d samples; the interval is a bound (range and drift), not a statistical interval", r.Samples)})
	default:
		rows = append(rows, []string{"  averaged over", fmt.Sprintf("%d samples, %s effective (correlation time %s)", r.Samples, ui.Number(r.EffectiveSamples), ui.Number(r.CorrelationTime))})
	}
	rows = append(rows, []string{"  from", fmt.Sprintf("t = %s (transient cut: %s) to t = %s", ui.Number(r.TransientEnd), r.TransientMethod, ui.Number(r.EndTime))})
	if c := r.Cycle; c != nil {
		st := func(s harvest.Statistic) string {
			return ui.PlusMinus(s.Value, harvest.HalfWidth(s, r.Confidence))
		}
		rows = append(rows,
			[]string{"  cycles", fmt.Sprintf("max %s, min %s, amplitude %s", st(c.Max), st(c.Min), st(c.Amplitude))},
			[]string{"  frequency", st(c.Frequency) + " per time unit"})
	}
	if !math.IsNaN(r.RMS.Value) {
		rows = append(rows, []string{"  rms", ui.PlusMinus(r.RMS.Value, harvest.HalfWidth(r.RMS, r.Confidence)) + " (of the fluctuation)"})
	}
	rows = append(rows, []string{"  verdict", verdictNote(r) + "  " + r.Message})
	for _, n := range r.Notes {
		rows = append(rows, []string{"  note", n})
	}
	ui.Table(w, rows)
}
