// File: The reader of column histories: streaming, header names, restarts
// merged by time. No published method; the rules are the program's own
// and are documented on ReadSeries.

package history

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
)

// Errors returned by ReadSeries, alone or inside a *LineError. Test them
// with errors.Is.
var (
	// ErrNoFiles: the glob matched no file in the variant directory.
	ErrNoFiles = errors.New("no history file matches")
	// ErrNoData: the files hold no data row.
	ErrNoData = errors.New("no data rows")
	// ErrNonFinite: a needed value is NaN or infinite (a diverged run).
	ErrNonFinite = errors.New("value is NaN or infinite")
	// ErrTimeOrder: time decreases inside one file.
	ErrTimeOrder = errors.New("time decreases")
	// ErrColumn: a column is missing, or a header name is not found.
	ErrColumn = errors.New("column not found")
	// ErrMalformed: a data line cannot be read.
	ErrMalformed = errors.New("malformed line")
)

// LineError locates a problem in a history file.
type LineError struct {
	File   string // path as given to the reader
	Line   int    // 1-based line number
	Err    error  // one of the Err… sentinels
	Detail string // what was seen
}

func (e *LineError) Error() string {
	if e.Detail == "" {
		return fmt.Sprintf("%s:%d: %v", e.File, e.Line, e.Err)
	}
	return fmt.Sprintf("%s:%d: %v: %s", e.File, e.Line, e.Err, e.Detail)
}

func (e *LineError) Unwrap() error { return e.Err }

// Series is a merged history: Time is non-decreasing and Value[i] is the
// value at Time[i].
type Series struct {
	Time  []float64 `json:"time"`
	Value []float64 `json:"value"`

	// Files lists the files read, relative to the variant directory, in
	// merge order (by first time).
	Files []string `json:"files"`
	// Overlaps lists the restart overlaps that were resolved.
	Overlaps []Overlap `json:"overlaps,omitempty"`
	// Notes lists tolerated oddities: a dropped incomplete last line,
	// skipped text lines, empty files.
	Notes []string `json:"notes,omitempty"`
}

// Overlap records that a later file (a restart) covered times that an
// earlier file also held; the earlier file's samples from From to To were
// replaced.
type Overlap struct {
	Earlier string  `json:"earlier"`
	Later   string  `json:"later"`
	From    float64 `json:"from"`    // first dropped time of the earlier file
	To      float64 `json:"to"`      // last dropped time of the earlier file
	Samples int     `json:"samples"` // number of dropped samples
}

func (o Overlap) String() string {
	return fmt.Sprintf("%s replaces %s from t=%g (to %g, %d samples)", o.Later, o.Earlier, o.From, o.To, o.Samples)
}

// ReadSeries reads every file of dir matching q.Files and merges them into
// one series.
//
// File format. A history is plain text, one time step per line. Data
// fields are separated by any run of blanks, tabs, commas, semicolons or
// parentheses, so "0.5 (1.2 0.3 0) (0.1 0 0)" is a row of seven fields.
// Blank lines, CR-LF line ends and leading or trailing blanks are ignored.
// A line whose first non-blank text is the comment marker is a comment; on
// a data line a field that starts with the marker begins a remark that runs
// to the end of the line (so a Windows "1.#QNAN" is still seen as NaN).
// Numbers are read by strconv.ParseFloat, after an exact fast path for
// plain decimals that yields the same bits (see parseDecimal); a Fortran
// exponent letter D is also accepted. Only the needed columns of a data row
// are converted.
//
// Header names. A data row is the first line whose fields are all numbers.
// The lines before it (comment lines with their marker removed, and lines
// that are not all numbers) are header candidates; the header is the last
// candidate that splits into as many fields as that first data row. Header
// fields are separated by blanks, tabs, commas and semicolons only, so a
// name such as "Cd(total)" stays whole, while parentheses that group names,
// as in "t (px py pz) (sx sy sz)", are dropped. A name is matched exactly,
// else case-insensitively if that is unambiguous. Each file has its own
// header.
//
// Tolerated. A last line without its newline is being written: it is
// dropped, never read. A line with no number at all amid the data (e.g. a
// repeated header) is skipped and noted. A file with no data row is noted
// and skipped.
//
// Errors. A NaN or infinite needed value gives ErrNonFinite; a time smaller
// than the previous one in the same file gives ErrTimeOrder (equal times, as
// printed with few digits, are kept as separate samples); a data line
// with too few fields or a field that is not a number gives ErrMalformed.
// These come wrapped in a *LineError naming the file and line.
//
// Restarts. Files are ordered by their first time (ties by name). Where a
// file starts at or before the end of the series built so far, the later
// file wins from its first time on: every earlier sample at or after that
// time is dropped, and an Overlap records it.
//
// Memory. Files are streamed through a bufio.Reader; only the time and
// value slices of the series are kept.
func ReadSeries(dir string, q Quantity) (*Series, error) {
	if err := q.Validate(); err != nil {
		return nil, fmt.Errorf("harvest: invalid quantity: %w", err)
	}
	names, err := filepath.Glob(filepath.Join(dir, q.Files))
	if err != nil {
		return nil, fmt.Errorf("files %q: %w", q.Files, err)
	}
	var files []string
	for _, n := range names {
		if st, err := os.Stat(n); err == nil && st.Mode().IsRegular() {
			files = append(files, n)
		}
	}
	if len(files) == 0 {
		return nil, fmt.Errorf("%w: %q in %s", ErrNoFiles, q.Files, dir)
	}
	sort.Strings(files)
	rel := func(n string) string {
		if r, err := filepath.Rel(dir, n); err == nil {
			return filepath.ToSlash(r)
		}
		return n
	}

	s := &Series{}
	p := newParser(q)
	// First pass: each file's first time, to order restarts.
	type start struct {
		name string
		t0   float64
	}
	var starts []start
	for _, n := range files {
		t0, ok, err := p.firstTime(n)
		if err != nil {
			return nil, err
		}
		if !ok {
			s.Notes = append(s.Notes, fmt.Sprintf("%s: no data row, skipped", rel(n)))
			continue
		}
		starts = append(starts, start{n, t0})
	}
	if len(starts) == 0 {
		return s, fmt.Errorf("%w in %q (%s)", ErrNoData, q.Files, dir)
	}
	sort.SliceStable(starts, func(i, j int) bool { return starts[i].t0 < starts[j].t0 })

	type segment struct {
		name string
		from int
	}
	var segs []segment
	for _, st := range starts {
		name := rel(st.name)
		// The later file wins from its first time on.
		cut := sort.SearchFloat64s(s.Time, st.t0)
		if cut < len(s.Time) {
			for i := len(segs) - 1; i >= 0; i-- {
				end := len(s.Time)
				if i+1 < len(segs) {
					end = segs[i+1].from
				}
				lo := max(segs[i].from, cut)
				if lo < end {
					s.Overlaps = append(s.Overlaps, Overlap{
						Earlier: segs[i].name, Later: name,
						From: s.Time[lo], To: s.Time[end-1], Samples: end - lo,
					})
				}
			}
			for len(segs) > 0 && segs[len(segs)-1].from >= cut {
				segs = segs[:len(segs)-1]
			}
			s.Time, s.Value = s.Time[:cut], s.Value[:cut]
		}
		segs = append(segs, segment{name, len(s.Time)})
		s.Files = append(s.Files, name)
		f, err := os.Open(st.name)
		if err != nil {
			return nil, err
		}
		p.size = 0
		if fi, err := f.Stat(); err == nil {
			p.size = fi.Size()
		}
		var notes []string
		s.Time, s.Value, notes, err = p.read(f, st.name, s.Time, s.Value, false)
		f.Close()
		if err != nil {
			return nil, err
		}
		for _, nt := range notes {
			s.Notes = append(s.Notes, rel(st.name)+": "+nt)
		}
	}
	if len(s.Time) == 0 {
		return s, fmt.Errorf("%w in %q (%s)", ErrNoData, q.Files, dir)
	}
	return s, nil
}

func (p *parser) firstTime(name string) (float64, bool, error) {
	f, err := os.Open(name)
	if err != nil {
		return 0, false, err
	}
	defer f.Close()
	t, _, _, err := p.read(f, name, nil, nil, true)
	if err != nil || len(t) == 0 {
		return 0, false, err
	}
	return t[0], true, nil
}

// Separator tables for data rows and header lines.
var dataSep, headSep [256]bool

func init() {
	for _, c := range []byte(" \t\r\v\f,;") {
		dataSep[c] = true
		headSep[c] = true
	}
	dataSep['('] = true
	dataSep[')'] = true
}

// nextField returns the bounds of the first field of line at or after pos,
// or start == len(line) if there is none.
func nextField(line []byte, pos int, sep *[256]bool) (start, end int) {
	for pos < len(line) && sep[line[pos]] {
		pos++
	}
	start = pos
	for pos < len(line) && !sep[line[pos]] {
		pos++
	}
	return start, pos
}

// splitFields appends the fields of line to dst.
func splitFields(dst [][]byte, line []byte, sep *[256]bool) [][]byte {
	for pos := 0; ; {
		a, b := nextField(line, pos, sep)
		if a == len(line) {
			return dst
		}
		dst = append(dst, line[a:b])
		pos = b
	}
}

// looksNonFinite recognises NaN and infinity spellings of common runtimes.
func looksNonFinite(b []byte) bool {
	if len(b) > 32 {
		return false
	}
	s := strings.ToLower(string(b))
	s = strings.TrimLeft(s, "+-")
	return strings.HasPrefix(s, "nan") || strings.HasPrefix(s, "inf") ||
		strings.Contains(s, "#qnan") || strings.Contains(s, "#snan") ||
		strings.Contains(s, "#ind") || strings.Contains(s, "#inf")
}

// parser reads history files for one Quantity.
type parser struct {
	comment []byte
	timeCol Column
	terms   []Term
	mult    float64
	named   bool // some column is named

	// Per file, after the header is resolved.
	timeIdx int
	cols    []int // 0-based column of each term
	maxCol  int
	want    []bool
	vals    []float64
	fields  [][]byte
	heads   [][]byte // header candidates (copies)
	br      *bufio.Reader
	long    []byte
	size    int64 // size of the file being read, for preallocation
}

const maxHeaderCandidates = 64

func newParser(q Quantity) *parser {
	p := &parser{
		comment: []byte(q.comment()),
		timeCol: q.timeColumn(),
		terms:   q.Value,
		mult:    q.Scale.Multiplier(),
	}
	p.named = p.timeCol.Name != ""
	for _, t := range q.Value {
		if t.Column.Name != "" {
			p.named = true
		}
	}
	return p
}

// resolve maps the columns to 0-based indices for a file whose first data
// row has nf fields.
func (p *parser) resolve(name string, line, nf int) error {
	var header [][]byte
	if p.named {
		for i := len(p.heads) - 1; i >= 0; i-- {
			h := splitFields(nil, p.heads[i], &headSep)
			if len(h) == nf {
				for j := range h {
					h[j] = trimGroupParens(h[j])
				}
				header = h
				break
			}
		}
	}
	find := func(c Column) (int, error) {
		if c.Name == "" {
			if c.Index < 1 {
				return 0, &LineError{name, line, ErrColumn, fmt.Sprintf("column index %d (indices start at 1)", c.Index)}
			}
			return c.Index - 1, nil
		}
		if header == nil {
			return 0, &LineError{name, line, ErrColumn, fmt.Sprintf(
				"no header line with %d fields before the first data row, so %s cannot be found; give the column by index",
				nf, c)}
		}
		for i, h := range header {
			if string(h) == c.Name {
				return i, nil
			}
		}
		found := -1
		for i, h := range header {
			if strings.EqualFold(string(h), c.Name) {
				if found >= 0 {
					found = -2
					break
				}
				found = i
			}
		}
		if found >= 0 {
			return found, nil
		}
		return 0, &LineError{name, line, ErrColumn, fmt.Sprintf("%s not in header [%s]", c, bytes.Join(header, []byte(" ")))}
	}
	var err error
	if p.timeIdx, err = find(p.timeCol); err != nil {
		return err
	}
	p.cols = p.cols[:0]
	p.maxCol = p.timeIdx
	for _, t := range p.terms {
		c, err := find(t.Column)
		if err != nil {
			return err
		}
		p.cols = append(p.cols, c)
		p.maxCol = max(p.maxCol, c)
	}
	if p.maxCol >= nf {
		return &LineError{name, line, ErrColumn, fmt.Sprintf("column %d wanted, the data rows have %d fields", p.maxCol+1, nf)}
	}
	p.want = make([]bool, p.maxCol+1)
	p.vals = make([]float64, p.maxCol+1)
	p.want[p.timeIdx] = true
	for _, c := range p.cols {
		p.want[c] = true
	}
	return nil
}

// readLine returns the next line without its end, whether it ended with a
// newline, and io.EOF after the last line.
func (p *parser) readLine() (line []byte, terminated bool, err error) {
	line, err = p.br.ReadSlice('\n')
	if err == bufio.ErrBufferFull {
		p.long = append(p.long[:0], line...)
		for err == bufio.ErrBufferFull {
			line, err = p.br.ReadSlice('\n')
			p.long = append(p.long, line...)
		}
		line = p.long
	}
	if err != nil && err != io.EOF {
		return nil, false, err
	}
	if len(line) == 0 && err == io.EOF {
		return nil, false, io.EOF
	}
	terminated = len(line) > 0 && line[len(line)-1] == '\n'
	if terminated {
		line = line[:len(line)-1]
	}
	return line, terminated, nil
}

// read parses one history from r, appending rows to t and v. With
// firstOnly it stops after the first data row. name is used in errors.
func (p *parser) read(r io.Reader, name string, t, v []float64, firstOnly bool) ([]float64, []float64, []string, error) {
	if p.br == nil {
		p.br = bufio.NewReaderSize(r, 1<<18)
	} else {
		p.br.Reset(r)
	}
	defer p.br.Reset(nil)
	p.heads = p.heads[:0]
	var notes []string
	inHeader := true
	skipped, firstSkipped := 0, 0
	prev := math.Inf(-1)
	for lineNo := 1; ; lineNo++ {
		line, terminated, err := p.readLine()
		if err == io.EOF {
			break
		}
		if err != nil {
			return t, v, notes, fmt.Errorf("%s: %w", name, err)
		}
		s := trimBlanks(line)
		if bytes.HasPrefix(s, p.comment) {
			if inHeader && p.named {
				p.keepHeader(s[len(p.comment):])
			}
			continue
		}
		if len(s) == 0 {
			continue
		}
		if !terminated {
			notes = append(notes, fmt.Sprintf("line %d has no newline (still being written?): dropped", lineNo))
			break
		}
		if inHeader {
			s = cutRemark(s, p.comment)
			p.fields = splitFields(p.fields[:0], s, &dataSep)
			numeric := len(p.fields) > 0
			for _, f := range p.fields {
				if _, ok, _ := parseNumber(f); !ok {
					numeric = false
					break
				}
			}
			if !numeric {
				if p.named {
					p.keepHeader(s)
				}
				continue
			}
			if err := p.resolve(name, lineNo, len(p.fields)); err != nil {
				return t, v, notes, err
			}
			inHeader = false
			if !firstOnly && p.size > 0 {
				// Room for the rest of the file at this line's length.
				rows := int(p.size/int64(len(line)+1)) + 16
				t = slices.Grow(t, rows)
				v = slices.Grow(v, rows)
			}
		}
		// Fast path: convert only the wanted fields.
		pos, nf := 0, 0
		bad, nonFinite := -1, false
		for nf <= p.maxCol {
			a, b := nextField(s, pos, &dataSep)
			if a == len(s) || (s[a] == p.comment[0] && bytes.HasPrefix(s[a:], p.comment)) {
				break // end of line or a remark
			}
			if p.want[nf] {
				x, ok, nfin := parseNumber(s[a:b])
				if !ok || nfin {
					bad, nonFinite = nf, nfin
					break
				}
				p.vals[nf] = x
			}
			pos = b
			nf++
		}
		if bad >= 0 || nf <= p.maxCol {
			if nonFinite {
				return t, v, notes, &LineError{name, lineNo, ErrNonFinite, fmt.Sprintf("column %d", bad+1)}
			}
			if !hasNumber(s) {
				if skipped == 0 {
					firstSkipped = lineNo
				}
				skipped++
				continue
			}
			if bad >= 0 {
				return t, v, notes, &LineError{name, lineNo, ErrMalformed, fmt.Sprintf("column %d is not a number: %q", bad+1, clip(fieldAt(s, bad)))}
			}
			return t, v, notes, &LineError{name, lineNo, ErrMalformed, fmt.Sprintf("%d fields, column %d wanted", nf, p.maxCol+1)}
		}
		tt := p.vals[p.timeIdx]
		if tt < prev {
			return t, v, notes, &LineError{name, lineNo, ErrTimeOrder, fmt.Sprintf("time %g after %g", tt, prev)}
		}
		prev = tt
		var sum float64
		for i, c := range p.cols {
			sum += p.terms[i].factor() * p.vals[c]
		}
		sum *= p.mult
		if math.IsNaN(sum) || math.IsInf(sum, 0) {
			return t, v, notes, &LineError{name, lineNo, ErrNonFinite, "the scaled sum overflows"}
		}
		t = append(t, tt)
		v = append(v, sum)
		if firstOnly {
			break
		}
	}
	if skipped > 0 {
		notes = append(notes, fmt.Sprintf("%d line(s) without numbers skipped, first at line %d", skipped, firstSkipped))
	}
	return t, v, notes, nil
}

// trimGroupParens drops the parentheses that group names, as in
// "(px py pz)": leading '(' always, trailing ')' when no '(' remains, so
// "Cd(total)" keeps its own.
func trimGroupParens(b []byte) []byte {
	b = bytes.TrimLeft(b, "(")
	if bytes.IndexByte(b, '(') < 0 {
		b = bytes.TrimRight(b, ")")
	}
	return b
}

// cutRemark removes a trailing remark: the marker and what follows, where
// the marker starts a field (so "1.#QNAN" keeps its '#').
func cutRemark(s, marker []byte) []byte {
	for off := 0; ; {
		i := bytes.Index(s[off:], marker)
		if i < 0 {
			return s
		}
		i += off
		if i == 0 || dataSep[s[i-1]] {
			return s[:i]
		}
		off = i + 1
	}
}

func (p *parser) keepHeader(s []byte) {
	s = bytes.TrimSpace(s)
	if len(s) == 0 {
		return
	}
	if len(p.heads) == maxHeaderCandidates {
		copy(p.heads, p.heads[1:])
		p.heads = p.heads[:maxHeaderCandidates-1]
	}
	p.heads = append(p.heads, bytes.Clone(s))
}

// trimBlanks removes leading blanks, tabs and CRs.
func trimBlanks(s []byte) []byte {
	for len(s) > 0 {
		switch s[0] {
		case ' ', '\t', '\r', '\v', '\f':
			s = s[1:]
		default:
			return s
		}
	}
	return s
}

// hasNumber reports whether any field of s is a number.
func hasNumber(s []byte) bool {
	for pos := 0; ; {
		a, b := nextField(s, pos, &dataSep)
		if a == len(s) {
			return false
		}
		if _, ok, _ := parseNumber(s[a:b]); ok {
			return true
		}
		pos = b
	}
}

func fieldAt(s []byte, k int) []byte {
	pos := 0
	for i := 0; ; i++ {
		a, b := nextField(s, pos, &dataSep)
		if a == len(s) {
			return nil
		}
		if i == k {
			return s[a:b]
		}
		pos = b
	}
}

func clip(b []byte) string {
	if len(b) > 40 {
		return string(b[:40]) + "…"
	}
	return string(b)
}
