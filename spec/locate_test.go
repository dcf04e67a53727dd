package spec

import "testing"

func TestLocate(t *testing.T) {
	src := `name = "x"   # line 1
about = """
[data]
fake = 1
"""
[data]                       # line 6
"source" = 'csv'
spectrum.kind = "list"       # line 8
signal = { kind = "top",
  top = 3 }
values = [
  1, # a comment with [brackets] and = signs
  2,
]
[data.noise]                 # line 15
sd = 1
[[model]]                    # line 17
family = "ridge"
[[model]]                    # line 19
  label = "a = b # not a comment"
lambda = 1
[model.extra]                # line 22
k = 1
x = [{ a = 1 }, { b = 2 },
     { c = 3 }]              # line 25
[ grid ]                     # line 26
param='''
multi'''
points = 3                   # line 29
`
	want := map[string]int{
		"name": 1, "about": 2, "data": 6, "data.source": 7, "data.spectrum": 8, "data.spectrum.kind": 8,
		"data.signal": 9, "data.signal.kind": 9, "data.signal.top": 10, "data.values": 11,
		"data.noise": 15, "data.noise.sd": 16, "model": 17, "model[1]": 17, "model[1].family": 18,
		"model[2]": 19, "model[2].label": 20, "model[2].lambda": 21, "model[2].extra": 22,
		"model[2].extra.k": 23, "model[2].extra.x": 24, "model[2].extra.x[1].a": 24,
		"model[2].extra.x[2].b": 24, "model[2].extra.x[3].c": 25, "grid": 26, "grid.param": 27, "grid.points": 29,
	}
	got := locate(src)
	for k, l := range want {
		if got[k] != l {
			t.Errorf("locate()[%q] = %d, want %d", k, got[k], l)
		}
	}
	if _, ok := got["data.fake"]; ok {
		t.Errorf("locate() looked inside a multi-line string")
	}
	if _, ok := got["model[2].extra.x[1]"]; !ok {
		t.Errorf("locate() missed an inline table inside an array")
	}
}
