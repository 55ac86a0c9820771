package recipe

import (
	"errors"
	"fmt"
	"strings"
)

// Error is a problem in a recipe, located by file and line (Line is 0 when
// the place is not known).
type Error struct {
	File string
	Line int
	Msg  string // what is wrong and what to do about it
}

func (e *Error) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File, e.Msg)
}

// ErrInvalid is wrapped by every error Load returns for a recipe that is
// readable but wrong, so that callers can map it to the "bad recipe" exit
// status with errors.Is.
var ErrInvalid = errors.New("invalid recipe")

// Errors is the list of problems found in one recipe. Load reports all of
// them at once, so a user fixes the file in one pass.
type Errors []*Error

func (es Errors) Error() string {
	var b strings.Builder
	for i, e := range es {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(e.Error())
	}
	return b.String()
}

// Is makes errors.Is(err, ErrInvalid) true for any recipe problem list.
func (es Errors) Is(target error) bool { return target == ErrInvalid }

// problems collects located errors while a recipe is checked.
type problems struct {
	file  string
	lines map[string]int
	list  Errors
}

// at records a problem at the line of the given key path (for example
// "param[1].max"); when that exact key has no line, the nearest enclosing
// key that has one is used.
func (p *problems) at(path, format string, args ...any) {
	p.list = append(p.list, &Error{File: p.file, Line: p.line(path), Msg: fmt.Sprintf(format, args...)})
}

func (p *problems) line(path string) int {
	for path != "" {
		if l, ok := p.lines[path]; ok {
			return l
		}
		i := strings.LastIndexAny(path, ".[")
		if i < 0 {
			break
		}
		path = path[:i]
	}
	return 0
}
