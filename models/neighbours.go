package models

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"riskgrid/spec"
)

var _ Fitter = (*Neighbours)(nil)

func init() {
	register(spec.FamilyNeighbours, func(m spec.Model) (Fitter, error) {
		k, ok := m.Params["neighbours"]
		if ok && !(k >= 1 && k <= 1<<31 && k == math.Trunc(k)) {
			return nil, fmt.Errorf("%w: %s neighbours = %v (accepted: an integer ≥ 1, at most n_train)", ErrParam, m.Family, k)
		}
		return &Neighbours{K: int(k)}, nil
	})
}

// Neighbours fits k-nearest-neighbour regression: the prediction at x is
// the mean of the targets of the k training inputs nearest to x,
//
//	f̂(x) = (1/k) Σ_{i ∈ N_k(x)} y_i,
//
// in Euclidean distance, ties broken by the lower row index (so N_k(x) is
// the first k rows in the order of (‖x − x_i‖², i)). It is a linear smoother
// ŷ = Hy with H_ij = 1/k for j ∈ N_k(x_i); capacity grows as k falls, and
// 1-NN interpolates distinct training inputs (each is its own nearest
// neighbour, at distance 0). Reference: The Elements of Statistical
// Learning, 2nd ed., Springer, 2009, §2.3.2 (textbook).
//
// Each fit reports:
//
//	Pred      = f̂ at the rows of Train.Test (nil without them)
//	TrainRisk = (1/n)‖y − ŷ‖², ŷ_i = f̂(x_i) with x_i among the candidates
//	Norm      = ‖ŷ‖₂/√n, the empirical L2 norm of the fitted function on the
//	            training inputs (a k-NN fit has no parameter norm)
//	DF        = tr(H) = Σ_i [i ∈ N_k(x_i)]/k, which is n/k when no input
//	            repeats (The Elements of Statistical Learning, §7.6, from
//	            memory); a row with k or more duplicates of lower index
//	            is not its own neighbour
//	Cond      = NaN (no system is solved); Method "sort".
//
// Path knobs:
//
//   - spec.ParamNeighbours: k. For each training and test input, one sort of
//     its distances to the n training inputs serves every k of the path
//     (the prediction for each k is a prefix mean).
//   - spec.ParamNTrain: the first n rows at K neighbours. One sort per input
//     over all rows serves every n: the neighbours within the first n rows
//     are the first K entries of that order with index < n.
//
// The squared distances are shared with the seed's other k-NN and kernel
// models through the Train. A k that is not an integer from 1 to the number
// of training rows (k > n_train included) is a per-fit ErrValue error
// naming k and n; another knob is ErrKnob; NaN or infinite data is
// ErrNotFinite.
type Neighbours struct {
	// K is the number of neighbours k ≥ 1 for the n_train knob (the
	// neighbours knob overrides it). Zero is invalid for that knob.
	K int
}

// neighbour is a training row and its squared distance.
type neighbour struct {
	d float64
	i int
}

func byDistance(a, b neighbour) int {
	if c := cmp.Compare(a.d, b.d); c != 0 {
		return c
	}
	return cmp.Compare(a.i, b.i)
}

// Path fits the path; see the type documentation. It panics if len(y) is
// not the number of rows of x, or Train.Test has other columns than x.
func (nb *Neighbours) Path(t *Train, knob string, values []float64) []Fit {
	rows, _ := checkShape(t.X, t.Y)
	fits := make([]Fit, len(values))
	switch knob {
	case spec.ParamNeighbours:
		ks := make([]int, len(values))
		for i, v := range values {
			if v != math.Trunc(v) || v < 1 || v > float64(rows) {
				fits[i].Err = fmt.Errorf("%w: %s k = %v with n_train = %d (accepted: an integer from 1 to n_train)",
					ErrValue, knob, v, rows)
				continue
			}
			ks[i] = int(v)
		}
		if slices.Max(append(ks, 0)) == 0 {
			return fits
		}
		ds, err := t.sqDists()
		if err != nil {
			failAll(fits, err)
			return fits
		}
		neighboursPath(t, ds, ks, fits)
	case spec.ParamNTrain:
		ns, top := counts(fits, knob, values, rows, "rows")
		for i, n := range ns {
			if n > 0 && (nb.K < 1 || nb.K > n) {
				fits[i].Err = fmt.Errorf("%w: %s k = %d with n_train = %d (accepted: an integer from 1 to n_train)",
					ErrValue, spec.ParamNeighbours, nb.K, n)
				ns[i] = 0
			}
		}
		if top == 0 || slices.Max(ns) == 0 {
			return fits
		}
		ds, err := t.sqDists()
		if err != nil {
			failAll(fits, err)
			return fits
		}
		rowsPath(t, ds, nb.K, ns, fits)
	default:
		failAll(fits, fmt.Errorf("%w: %q (accepted: %s, %s)", ErrKnob, knob, spec.ParamNeighbours, spec.ParamNTrain))
	}
	return fits
}

// byNearest fills order with the n training rows by (distance, index) from
// the distances row d.
func byNearest(order []neighbour, d []float64) []neighbour {
	order = order[:0]
	for i, v := range d {
		order = append(order, neighbour{v, i})
	}
	slices.SortFunc(order, byDistance)
	return order
}

// neighboursPath fits every k of ks (0: skip) on all n rows.
func neighboursPath(t *Train, ds *distances, ks []int, fits []Fit) {
	n, y := ds.n, t.Y
	kmax := slices.Max(ks)
	order := make([]neighbour, 0, n)
	prefix := make([]float64, kmax+1)
	// means sets prefix[k] = Σ of the first k targets in order.
	means := func(d []float64) []neighbour {
		order = byNearest(order, d)
		for k, e := range order[:kmax] {
			prefix[k+1] = prefix[k] + y[e.i]
		}
		return order
	}
	rss := make([]float64, len(ks))
	sq := make([]float64, len(ks))
	self := make([]int, len(ks)) // rows among their own k neighbours
	for i := range n {
		order := means(ds.train[i*n : (i+1)*n])
		rank := slices.IndexFunc(order, func(e neighbour) bool { return e.i == i })
		for v, k := range ks {
			if k == 0 {
				continue
			}
			f := prefix[k] / float64(k)
			r := y[i] - f
			rss[v] += r * r
			sq[v] += f * f
			if rank < k {
				self[v]++
			}
		}
	}
	for v, k := range ks {
		if k == 0 {
			continue
		}
		fits[v] = Fit{TrainRisk: rss[v] / float64(n), Norm: math.Sqrt(sq[v] / float64(n)),
			DF: float64(self[v]) / float64(k), Cond: math.NaN(), Method: "sort"}
		if ds.m > 0 {
			fits[v].Pred = make([]float64, ds.m)
		}
	}
	row := make([]float64, n)
	for j := range ds.m {
		means(t.testDists(j, row))
		for v, k := range ks {
			if k > 0 {
				fits[v].Pred[j] = prefix[k] / float64(k)
			}
		}
	}
	neighboursFinite(fits)
}

// rowsPath fits k neighbours on the first ns[v] rows for every v (0: skip).
func rowsPath(t *Train, ds *distances, k int, ns []int, fits []Fit) {
	all, y := ds.n, t.Y
	order := make([]neighbour, 0, all)
	// mean returns the mean target of the first k entries of order with
	// index < n, and whether row self is among them.
	mean := func(n, self int) (float64, bool) {
		var s float64
		in := false
		got := 0
		for _, e := range order {
			if e.i >= n {
				continue
			}
			s += y[e.i]
			in = in || e.i == self
			if got++; got == k {
				break
			}
		}
		return s / float64(k), in
	}
	nmax := slices.Max(ns)
	rss := make([]float64, len(ns))
	sq := make([]float64, len(ns))
	self := make([]int, len(ns))
	for i := range nmax {
		order = byNearest(order, ds.train[i*all:(i+1)*all])
		for v, n := range ns {
			if i >= n {
				continue
			}
			f, in := mean(n, i)
			r := y[i] - f
			rss[v] += r * r
			sq[v] += f * f
			if in {
				self[v]++
			}
		}
	}
	for v, n := range ns {
		if n == 0 {
			continue
		}
		fits[v] = Fit{TrainRisk: rss[v] / float64(n), Norm: math.Sqrt(sq[v] / float64(n)),
			DF: float64(self[v]) / float64(k), Cond: math.NaN(), Method: "sort"}
		if ds.m > 0 {
			fits[v].Pred = make([]float64, ds.m)
		}
	}
	row := make([]float64, all)
	for j := range ds.m {
		order = byNearest(order, t.testDists(j, row))
		for v, n := range ns {
			if n > 0 {
				fits[v].Pred[j], _ = mean(n, -1)
			}
		}
	}
	neighboursFinite(fits)
}

// neighboursFinite turns a fit with a non-finite result into an ErrNumerical
// error (a target near the float64 limit can overflow a sum).
func neighboursFinite(fits []Fit) {
	for v := range fits {
		f := &fits[v]
		if f.Err != nil || f.Method == "" {
			continue
		}
		bad := !kernelFinite(f.TrainRisk) || !kernelFinite(f.Norm)
		for _, p := range f.Pred {
			bad = bad || !kernelFinite(p)
		}
		if bad {
			*f = Fit{Method: f.Method, Cond: math.NaN(), Err: fmt.Errorf("%w: k-NN gave a non-finite fit", ErrNumerical)}
		}
	}
}
