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
func PlusMinus(mean, hw float64) string {
	if hw <= 0 || math.IsNaN(hw) || math.IsInf(hw, 0) {
		return strconv.FormatFloat(mean, 'g', 6, 64)
	}
	// Two significant digits of the half-width set the decimals.
	dec := max(0, 1-int(math.Floor(math.Log10(hw))))
	if dec > 12 {
		dec = 12
	}
	return fmt.Sprintf("%.*f ± %.*f", dec, mean, dec, hw)
}

// Caution is printed under every table of results.
const Caution = "results need validation (mesh and time-step checks, review by qualified people); local codes and licensed practice prevail"
