package ui

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"
)

// Table writes rows as columns aligned with spaces; the first row is the
// header.
func Table(w io.Writer, rows [][]string) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, r := range rows {
		fmt.Fprintln(tw, strings.Join(r, "\t"))
	}
	return tw.Flush()
}

// JSON writes v as indented JSON.
func JSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// CSV writes rows as CSV.
func CSV(w io.Writer, rows [][]string) error {
	cw := csv.NewWriter(w)
	cw.WriteAll(rows)
	return cw.Error()
}

// PlusMinus formats a mean and a half-width with digits to match the
// half-width's size: 0.5712 ± 0.0031.
//
// An unknown mean is a dash; a mean without an interval (too short to
// judge, still running) is marked as approximate with "~".
func PlusMinus(mean, hw float64) string {
	switch {
	case math.IsNaN(mean) || math.IsInf(mean, 0):
		return "-"
	case math.IsNaN(hw) || math.IsInf(hw, 0):
		return "~" + strconv.FormatFloat(mean, 'g', 5, 64)
	case hw <= 0:
		return strconv.FormatFloat(mean, 'g', 6, 64)
	}
	// Two significant digits of the half-width set the decimals; a
	// half-width far below the figure's own size (a deterministic
	// history) is written in exponent form.
	dec := max(0, 1-int(math.Floor(math.Log10(hw))))
	if dec > 12 {
		return strconv.FormatFloat(mean, 'g', 10, 64) + " ± " + strconv.FormatFloat(hw, 'g', 2, 64)
	}
	return fmt.Sprintf("%.*f ± %.*f", dec, mean, dec, hw)
}

// Number formats a figure for tables with four significant digits, and a
// dash for an unknown (NaN) one.
func Number(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "-"
	}
	return strconv.FormatFloat(x, 'g', 4, 64)
}

// CSVNumber formats a figure for CSV: full precision, and an empty cell
// for an unknown (NaN) one, so spreadsheets read it as missing.
func CSVNumber(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return ""
	}
	return strconv.FormatFloat(x, 'g', 10, 64)
}

// Caution is printed under every table of results.
const Caution = "results need validation (mesh and time-step checks, review by qualified people); local codes and licensed practice prevail"
