package runner

import (
	"fmt"
	"testing"
)

// TestSizeFamilies checks that the memory estimate follows what drives a
// family's working set: the largest number of random features, the
// training-set size of kernel ridge (n² matrices), the width of a network,
// and the predictions every cell keeps off the exact basis.
func TestSizeFamilies(t *testing.T) {
	peak := func(model, grid string, nTrain, nTest int) int64 {
		nt := "" // an n_train grid sets it
		if nTrain > 0 {
			nt = fmt.Sprintf("n_train = %d\n", nTrain)
		}
		src := fmt.Sprintf(`
name = "size"
[data]
source = "curve"
%sn_test = %d
shape = { kind = "sine", frequency = 1 }
noise = { sd = 0.1 }
[[model]]
%s
[grid]
%s
[seeds]
count = 3
`, nt, nTest, model, grid)
		return Size(mustParse(t, src), 2).PeakBytes
	}
	rf := func(top int) int64 {
		return peak(`family = "random-features"`, fmt.Sprintf(`param = "features"
values = [10, %d]`, top), 100, 64)
	}
	if a, b := rf(100), rf(10000); b < a+2*8*100*(10000-100) {
		t.Errorf("random features: peak %d at N = 10000, %d at N = 100; want the 100 × N feature matrix counted", b, a)
	}
	kr := func(n int) int64 {
		return peak("family = \"kernel-ridge\"\nbandwidth = 0.5", "param = \"lambda\"\nvalues = [0.1]", n, 64)
	}
	if a, b := kr(100), kr(2000); b < a+5*8*(2000*2000-100*100) {
		t.Errorf("kernel ridge: peak %d at n = 2000, %d at n = 100; want five n×n matrices per worker", b, a)
	}
	net := func(w int) int64 {
		return peak("family = \"two-layer-net\"\nsteps = 10", fmt.Sprintf("param = \"width\"\nvalues = [1, %d]", w), 50, 64)
	}
	if a, b := net(10), net(5000); b <= a {
		t.Errorf("two-layer net: peak %d at width 5000, not above %d at width 10", b, a)
	}
	ridge := func(nTest int) int64 {
		return peak("family = \"ridge\"\nlambda = 0.1", "param = \"n_train\"\nvalues = [10, 20]", 0, nTest)
	}
	if a, b := ridge(64), ridge(64000); b < a+8*2*(64000-64) {
		t.Errorf("ridge on test inputs: peak %d with 64000 test inputs, %d with 64; want the predictions counted", b, a)
	}
}
