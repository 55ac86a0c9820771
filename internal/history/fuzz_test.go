package history

import (
	"encoding/json"
	"testing"
)

// FuzzColumnSpec checks the column and term specs of a quantity as a
// recipe or a stored study gives them: a column written as text, and a
// value term in its JSON form. Whatever is accepted names a column and
// reads back the same after writing.
func FuzzColumnSpec(f *testing.F) {
	for _, s := range []struct{ text, term string }{
		{"Cd", `"Fx_p"`},
		{"3", `2`},
		{" 12 ", `{"column": 3, "factor": -1}`},
		{"0", `{"column": "Cd(total)", "factor": 1e-3}`},
		{"-4", `{"factor": 2}`},
		{"+7", `{"column": 2.5}`},
		{"", `{"column": 1, "factor": 0}`},
		{"x y", `[1]`},
	} {
		f.Add(s.text, []byte(s.term))
	}
	f.Fuzz(func(t *testing.T, text string, term []byte) {
		if c, err := ParseColumn(text); err == nil {
			if c.IsZero() || c.Index < 0 || (c.Name == "" && c.Index < 1) {
				t.Fatalf("%q gives the column %+v", text, c)
			}
			b, err := json.Marshal(c)
			if err != nil {
				t.Fatalf("%+v: %v", c, err)
			}
			var back Column
			if err := json.Unmarshal(b, &back); err != nil || back != c {
				t.Fatalf("%q: %+v writes %s, which reads back as %+v (%v)", text, c, b, back, err)
			}
		}
		var tm Term
		if err := json.Unmarshal(term, &tm); err != nil {
			return
		}
		if tm.Column.IsZero() || tm.Column.Index < 0 {
			t.Fatalf("%s gives the term %+v", term, tm)
		}
		b, err := json.Marshal(tm)
		if err != nil {
			t.Fatalf("%+v: %v", tm, err)
		}
		var back Term
		if err := json.Unmarshal(b, &back); err != nil || back != tm {
			t.Fatalf("%s: %+v writes %s, which reads back as %+v (%v)", term, tm, b, back, err)
		}
	})
}
