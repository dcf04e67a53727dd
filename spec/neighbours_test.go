package spec

import (
	"errors"
	"strings"
	"testing"
)

// TestNeighboursExceedNTrain: k-NN cannot average more neighbours than it
// has training rows; the error names the line of k and the n_train it
// exceeds, and k = n_train itself is accepted.
func TestNeighboursExceedNTrain(t *testing.T) {
	nn := "[[model]]\nfamily = \"nearest-neighbours\"\n"
	for _, tc := range []struct {
		name string
		p    pieces
		want string // "" for a valid spec
	}{
		{"grid k = n_train", pieces{model: nn, grid: "[grid]\nparam = \"neighbours\"\nvalues = [1, 20]\n"}, ""},
		{"grid k > n_train", pieces{model: nn, grid: "[grid]\nparam = \"neighbours\"\nvalues = [1, 21] #<\n"},
			"neighbours k = 21 exceeds n_train = 20 (data.n_train)"},
		{"ranged grid", pieces{model: nn, grid: "[grid]\nparam = \"neighbours\"\nfrom = 1\nto = 40 #<\npoints = 5\n"},
			"neighbours k = 40 exceeds n_train = 20"},
		{"model k > smallest n_train", pieces{model: nn + "neighbours = 8 #<\n", data: "[data]\nsource = \"linear-gaussian\"\ndim = 5\nnoise = { sd = 0.5 }\n",
			grid: "[grid]\nparam = \"n_train\"\nvalues = [5, 10, 40]\n"}, "neighbours k = 8 exceeds n_train = 5 (grid.values)"},
		{"model k ≤ every n_train", pieces{model: nn + "neighbours = 5\n", data: "[data]\nsource = \"linear-gaussian\"\ndim = 5\nnoise = { sd = 0.5 }\n",
			grid: "[grid]\nparam = \"n_train\"\nvalues = [5, 10, 40]\n"}, ""},
		{"outer n_train", pieces{model: nn, data: "[data]\nsource = \"linear-gaussian\"\ndim = 5\nnoise = { sd = 0.5 }\n",
			grid: "[grid]\nparam = \"neighbours\"\nvalues = [1, 3, 9] #<\n[grid.outer]\nparam = \"n_train\"\nvalues = [8, 16]\n"},
			"neighbours k = 9 exceeds n_train = 8"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			src := tc.p.src()
			_, err := Parse("t.toml", []byte(src))
			if tc.want == "" {
				if err != nil {
					t.Fatalf("Parse = %v, want no error\n%s", err, src)
				}
				return
			}
			var e *Error
			if !errors.As(err, &e) || !strings.Contains(e.Msg, tc.want) || e.Line != markedLine(src) {
				t.Fatalf("Parse error = %v, want line %d saying %q\n%s", err, markedLine(src), tc.want, src)
			}
		})
	}
}
