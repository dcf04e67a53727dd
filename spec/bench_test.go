package spec

import (
	"fmt"
	"strings"
	"testing"
)

// BenchmarkParse measures Parse on specs whose size grows with dim (a list
// spectrum and a list signal of dim values each).
func BenchmarkParse(b *testing.B) {
	for _, dim := range []int{10, 1000, 100000} {
		vals := strings.TrimSuffix(strings.Repeat("0.5, ", dim), ", ")
		data := fmt.Sprintf("[data]\nsource = \"linear-gaussian\"\nn_train = 20\ndim = %d\nnoise = { sd = 1 }\nspectrum = { kind = \"list\", values = [%s] }\nsignal = { kind = \"list\", values = [%s] }\n", dim, vals, vals)
		src := []byte(pieces{data: data, grid: "[grid]\nparam = \"features\"\nvalues = [1]\n"}.src())
		b.Run(fmt.Sprintf("dim=%d", dim), func(b *testing.B) {
			b.SetBytes(int64(len(src)))
			for b.Loop() {
				if _, err := Parse("b.toml", src); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
