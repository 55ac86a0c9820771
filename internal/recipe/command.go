package recipe

import (
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
)

// EnvPrefix starts the name of every environment variable the program sets
// for a stage.
const EnvPrefix = "SWEEP_"

// SelfProgram is the program name that, as a stage's first word, means
// this very program (for its built-in solver), wherever it is installed,
// so a recipe need not know the binary's path or have it on PATH.
const SelfProgram = "sweep"

// SplitCommand splits a command line into arguments the way a person reads
// it, without a shell: words are separated by blanks; single quotes keep
// everything literally; double quotes keep blanks and allow \" and \\;
// a backslash outside quotes keeps the next character. Nothing is expanded:
// $, `, ;, | and the like are ordinary characters.
func SplitCommand(s string) ([]string, error) {
	var args []string
	var cur strings.Builder
	inWord := false
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c == ' ' || c == '\t' || c == '\n' || c == '\r':
			if inWord {
				args = append(args, cur.String())
				cur.Reset()
				inWord = false
			}
		case c == '\'':
			j := strings.IndexByte(s[i+1:], '\'')
			if j < 0 {
				return nil, fmt.Errorf("command %q has an unclosed single quote", s)
			}
			cur.WriteString(s[i+1 : i+1+j])
			i += j + 1
			inWord = true
		case c == '"':
			i++
			for ; i < len(s) && s[i] != '"'; i++ {
				if s[i] == '\\' && i+1 < len(s) && (s[i+1] == '"' || s[i+1] == '\\') {
					i++
				}
				cur.WriteByte(s[i])
			}
			if i >= len(s) {
				return nil, fmt.Errorf("command %q has an unclosed double quote", s)
			}
			inWord = true
		case c == '\\':
			if i+1 >= len(s) {
				return nil, fmt.Errorf("command %q ends with a lone backslash", s)
			}
			i++
			cur.WriteByte(s[i])
			inWord = true
		default:
			cur.WriteByte(c)
			inWord = true
		}
	}
	if inWord {
		args = append(args, cur.String())
	}
	if len(args) == 0 {
		return nil, errors.New("the command is empty")
	}
	return args, nil
}

// CheckCommands verifies that every stage's programs can be found, the
// one of run and the one of continue alike: a program named with a slash
// must exist in the base case (relative to the stage's directory) or on
// disk; a bare name must be on PATH. It returns the located problems, or
// nil.
func (r *Recipe) CheckCommands() error {
	pr := &problems{file: filepath.Base(r.File)}
	for _, s := range r.Stages {
		r.checkProgram(pr, s, "run", s.Argv, s.Line)
		line := s.ContinueLine
		if line == 0 {
			line = s.Line
		}
		r.checkProgram(pr, s, "continue", s.ContinueArgv, line)
		if s.Settle != nil && s.Settle.By == "command" {
			r.checkProgram(pr, s, "settle command", s.Settle.Command, s.Line)
		}
	}
	if len(pr.list) > 0 {
		return pr.list
	}
	return nil
}

// checkProgram checks the program of one command of stage s; key names
// the command's recipe key in the messages ("run" or "continue").
func (r *Recipe) checkProgram(pr *problems, s Stage, key string, argv []string, line int) {
	if len(argv) == 0 {
		return
	}
	prog := argv[0]
	if prog == SelfProgram && !s.Shell {
		return
	}
	what := fmt.Sprintf("stage %q", s.Name)
	if key != "run" {
		what += ": " + key
	}
	if strings.ContainsRune(prog, '/') {
		p := prog
		if !filepath.IsAbs(p) {
			p = filepath.Join(r.Base, s.Dir, p)
		}
		st, err := os.Stat(p)
		switch {
		case err != nil:
			pr.list = append(pr.list, &Error{File: pr.file, Line: line,
				Msg: fmt.Sprintf("%s: program %q not found (looked for %s); add it to the base case or correct %s", what, prog, p, key)})
		case st.IsDir() || st.Mode()&0o111 == 0:
			pr.list = append(pr.list, &Error{File: pr.file, Line: line,
				Msg: fmt.Sprintf("%s: %s is not an executable file; chmod +x it, or run it through its interpreter (for example %s = \"sh %s\")", what, p, key, prog)})
		}
		return
	}
	if _, err := exec.LookPath(prog); err != nil {
		pr.list = append(pr.list, &Error{File: pr.file, Line: line,
			Msg: fmt.Sprintf("%s: program %q is not on PATH; install it, or give its path", what, prog)})
	}
}

// Env returns the environment variables the program sets for a stage of a
// variant, as NAME=value strings: every parameter as SWEEP_PARAM_<NAME>
// (upper case), then the variant's id, label and directory, the stage's
// name and core count, and the stage's own constants.
func (r *Recipe) Env(values []Value, id, label, variantDir string, s Stage) []string {
	env := make([]string, 0, len(values)+8+len(s.Env))
	for i, p := range r.Params {
		env = append(env, EnvPrefix+"PARAM_"+strings.ToUpper(p.Name)+"="+values[i].String())
	}
	env = append(env,
		EnvPrefix+"VARIANT_ID="+id,
		EnvPrefix+"VARIANT_LABEL="+label,
		EnvPrefix+"VARIANT_DIR="+variantDir,
		EnvPrefix+"STUDY_DIR="+r.Dir,
		EnvPrefix+"STAGE="+s.Name,
		fmt.Sprintf("%sCORES=%d", EnvPrefix, s.Cores),
	)
	for k, v := range s.Env {
		env = append(env, k+"="+v)
	}
	return env
}
