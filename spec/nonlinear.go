package spec

import "strconv"

// The [data] keys of the sources with a non-linear truth, and the keys of
// their inline tables by kind.
var (
	curveData   = []string{"inputs", "shape", "noise", "corrupt"}
	teacherData = []string{"dim", "inputs", "teacher", "noise", "corrupt"}

	curveInputs   = []string{InputsUniform, InputsGaussian}
	teacherInputs = []string{InputsGaussian, InputsSphere}
	shapes        = []string{ShapeSine, ShapeStep, ShapePolynomial, ShapeFourier}
	teachers      = []string{TeacherSingleIndex, TeacherTwoLayer}
	links         = []string{LinkReLU, LinkTanh, LinkHe2, LinkHe3}

	curveInputKeys = map[string][]string{
		InputsUniform:  {"kind", "low", "high"},
		InputsGaussian: {"kind", "mean", "sd"},
	}
	teacherInputKeys = map[string][]string{
		InputsGaussian: {"kind"},
		InputsSphere:   {"kind"},
	}
	shapeKeys = map[string][]string{
		ShapeSine:       {"kind", "amplitude", "frequency", "phase"},
		ShapeStep:       {"kind", "at", "left", "right"},
		ShapePolynomial: {"kind", "coefficients"},
		ShapeFourier:    {"kind", "frequencies", "cos", "sin"},
	}
	teacherKeys = map[string][]string{
		TeacherSingleIndex: {"kind", "link"},
		TeacherTwoLayer:    {"kind", "width"},
	}
)

// Default sizes of the test inputs of the non-linear sources.
const (
	DefaultCurveNodes   = 2048  // quadrature nodes of a curve
	DefaultTeacherTests = 10000 // Monte Carlo test inputs of a teacher
)

// testCount reads n_test of a curve or teacher: ≥ 2, default def.
func (d *decoder) testCount(t table, D *Data, def int, what string) error {
	n, ok, err := d.integer(t, "n_test", 2, maxInt, "an integer ≥ 2, the number of "+what)
	if err != nil {
		return err
	}
	D.NTest = def
	if ok {
		D.NTest = int(n)
	}
	return nil
}

// corrupt reads the optional corruption fraction q in [0, 1).
func (d *decoder) corrupt(t table, D *Data) error {
	q, _, err := d.float(t, "corrupt", func(x float64) bool { return x >= 0 && x < 1 },
		"a number in [0, 1), the fraction of training targets replaced by a random label")
	D.Corrupt = q
	return err
}

// curve reads the keys of a curve source: one input, f* = Shape.
func (d *decoder) curve(t table, D *Data) error {
	if err := d.testCount(t, D, DefaultCurveNodes, "quadrature nodes"); err != nil {
		return err
	}
	D.Dim = 1
	st, kind, _, err := d.kindTable(t, "inputs", curveInputs, curveInputKeys, InputsUniform)
	if err != nil {
		return err
	}
	in := &D.Inputs
	in.Kind = kind
	num := func(k string, ok func(float64) bool, accepted string, def float64) (float64, bool, error) {
		x, present, err := d.float(st, k, ok, accepted)
		if !present {
			x = def
		}
		return x, present, err
	}
	switch kind {
	case InputsUniform:
		var lowSet, highSet bool
		if in.Low, lowSet, err = num("low", anyNumber, "a number, the left end of the input interval", -1); err != nil {
			return err
		}
		if in.High, highSet, err = num("high", anyNumber, "a number > low, the right end of the input interval", 1); err != nil {
			return err
		}
		if !(in.High > in.Low) {
			k := "high"
			if lowSet && !highSet {
				k = "low"
			}
			return d.errf(st.key(k), "the interval [low, high] = [%s, %s] is empty (accepted: low < high; defaults -1 and 1)", fmtFloat(in.Low), fmtFloat(in.High))
		}
	case InputsGaussian:
		if in.Mean, _, err = num("mean", anyNumber, "a number, the mean of the inputs", 0); err != nil {
			return err
		}
		if in.SD, _, err = num("sd", positive, "a number > 0, the standard deviation of the inputs", 1); err != nil {
			return err
		}
	}
	if err := d.shape(t, D); err != nil {
		return err
	}
	if err := d.noise(t, D); err != nil {
		return err
	}
	return d.corrupt(t, D)
}

func (d *decoder) shape(t table, D *Data) error {
	if !t.has("shape") {
		return d.missing(t.key("shape"), `a table such as shape = { kind = "sine", frequency = 1 } (kinds: `+quoteList(shapes)+")")
	}
	st, kind, _, err := d.kindTable(t, "shape", shapes, shapeKeys, "")
	if err != nil {
		return err
	}
	S := &D.Shape
	S.Kind = kind
	need := func(k, accepted string) (float64, error) {
		x, ok, err := d.float(st, k, anyNumber, accepted)
		if err == nil && !ok {
			err = d.missing(st.key(k), accepted)
		}
		return x, err
	}
	opt := func(k, accepted string, def float64) (float64, error) {
		x, ok, err := d.float(st, k, anyNumber, accepted)
		if !ok {
			x = def
		}
		return x, err
	}
	switch kind {
	case ShapeSine:
		if S.Amplitude, err = opt("amplitude", "a number (default 1)", 1); err != nil {
			return err
		}
		if S.Frequency, err = need("frequency", "a number, cycles per unit of x"); err != nil {
			return err
		}
		if S.Phase, err = opt("phase", "a number, in radians (default 0)", 0); err != nil {
			return err
		}
	case ShapeStep:
		if S.At, err = need("at", "a number, where the step is"); err != nil {
			return err
		}
		if S.Left, err = need("left", "a number, the level for x < at"); err != nil {
			return err
		}
		if S.Right, err = need("right", "a number, the level for x ≥ at"); err != nil {
			return err
		}
		if in := D.Inputs; in.Kind == InputsUniform && !(S.At > in.Low && S.At < in.High) {
			return d.errf(st.key("at"), "at = %s is outside the input interval (%s, %s), so the truth would be constant (accepted: low < at < high)",
				fmtFloat(S.At), fmtFloat(in.Low), fmtFloat(in.High))
		}
	case ShapePolynomial:
		vals, ok, err := d.floats(st, "coefficients", anyNumber, "the coefficients c_0, c_1, … of Σ c_k x^k")
		if err != nil {
			return err
		} else if !ok {
			return d.missing(st.key("coefficients"), "an array [c_0, c_1, …], f*(x) = Σ c_k x^k")
		}
		S.Coefficients = vals
	case ShapeFourier:
		freq, ok, err := d.floats(st, "frequencies", anyNumber, "cycles per unit of x")
		if err != nil {
			return err
		} else if !ok {
			return d.missing(st.key("frequencies"), "an array of frequencies ν_k, cycles per unit of x")
		}
		S.Frequencies = freq
		var some bool
		for _, k := range []string{"cos", "sin"} {
			amp, ok, err := d.floats(st, k, anyNumber, "amplitudes, one per frequency")
			if err != nil {
				return err
			}
			if ok && len(amp) != len(freq) {
				return d.errf(st.key(k), "has %d amplitudes (accepted: one per frequency, %d)", len(amp), len(freq))
			}
			if !ok {
				amp = make([]float64, len(freq))
			}
			some = some || ok
			if k == "cos" {
				S.Cos = amp
			} else {
				S.Sin = amp
			}
		}
		if !some {
			return d.missing(st.key("cos"), "cos and/or sin, amplitudes one per frequency")
		}
	}
	return nil
}

// teacher reads the keys of a teacher source: d inputs, f* = Teacher.
func (d *decoder) teacher(t table, D *Data) error {
	if err := d.testCount(t, D, DefaultTeacherTests, "Monte Carlo test inputs"); err != nil {
		return err
	}
	dim, ok, err := d.integer(t, "dim", 1, maxInt, "an integer ≥ 1")
	if err != nil {
		return err
	}
	if !ok {
		return d.missing(t.key("dim"), "an integer ≥ 1, the input dimension")
	}
	D.Dim = int(dim)
	_, kind, _, err := d.kindTable(t, "inputs", teacherInputs, teacherInputKeys, InputsGaussian)
	if err != nil {
		return err
	}
	D.Inputs.Kind = kind
	if !t.has("teacher") {
		return d.missing(t.key("teacher"), `a table such as teacher = { kind = "single-index", link = "relu" } or { kind = "two-layer", width = 20 }`)
	}
	st, kind, _, err := d.kindTable(t, "teacher", teachers, teacherKeys, "")
	if err != nil {
		return err
	}
	T := &D.Teacher
	T.Kind = kind
	switch kind {
	case TeacherSingleIndex:
		if T.Link, err = d.choice(st, "link", links, ""); err != nil {
			return err
		}
	case TeacherTwoLayer:
		w, ok, err := d.integer(st, "width", 1, 1<<31, "an integer ≥ 1, the hidden units of the teacher")
		if err != nil {
			return err
		} else if !ok {
			return d.missing(st.key("width"), "an integer ≥ 1, the hidden units of the teacher")
		}
		T.Width = int(w)
	}
	if err := d.noise(t, D); err != nil {
		return err
	}
	return d.corrupt(t, D)
}

// Canonical form of the non-linear sources (see Canonical).
func (D Data) nonlinearTOML(kv func(k, v string)) {
	kv("n_test", strconv.Itoa(D.NTest))
	if D.Source == SourceTeacher {
		kv("dim", strconv.Itoa(D.Dim))
	}
	in := D.Inputs
	parts := []string{"kind = " + tomlString(in.Kind)}
	switch {
	case in.Kind == InputsUniform:
		parts = append(parts, "low = "+fmtFloat(in.Low), "high = "+fmtFloat(in.High))
	case in.Kind == InputsGaussian && D.Source == SourceCurve:
		parts = append(parts, "mean = "+fmtFloat(in.Mean), "sd = "+fmtFloat(in.SD))
	}
	kv("inputs", inline(parts))
	if D.Source == SourceCurve {
		S := D.Shape
		parts = []string{"kind = " + tomlString(S.Kind)}
		switch S.Kind {
		case ShapeSine:
			parts = append(parts, "amplitude = "+fmtFloat(S.Amplitude), "frequency = "+fmtFloat(S.Frequency), "phase = "+fmtFloat(S.Phase))
		case ShapeStep:
			parts = append(parts, "at = "+fmtFloat(S.At), "left = "+fmtFloat(S.Left), "right = "+fmtFloat(S.Right))
		case ShapePolynomial:
			parts = append(parts, "coefficients = "+floatArray(S.Coefficients))
		case ShapeFourier:
			parts = append(parts, "frequencies = "+floatArray(S.Frequencies), "cos = "+floatArray(S.Cos), "sin = "+floatArray(S.Sin))
		}
		kv("shape", inline(parts))
	} else {
		T := D.Teacher
		parts = []string{"kind = " + tomlString(T.Kind)}
		switch T.Kind {
		case TeacherSingleIndex:
			parts = append(parts, "link = "+tomlString(T.Link))
		case TeacherTwoLayer:
			parts = append(parts, "width = "+strconv.Itoa(T.Width))
		}
		kv("teacher", inline(parts))
	}
	kv("noise", noiseTOML(D.Noise))
	kv("corrupt", fmtFloat(D.Corrupt))
}

// nonlinearLines writes the hash lines of the non-linear sources (see
// dataLines: any new influence on the result must be added here).
func (D Data) nonlinearLines(w *stream) {
	w.str("data.inputs.kind", D.Inputs.Kind)
	w.f64("data.inputs.low", D.Inputs.Low)
	w.f64("data.inputs.high", D.Inputs.High)
	w.f64("data.inputs.mean", D.Inputs.Mean)
	w.f64("data.inputs.sd", D.Inputs.SD)
	S := D.Shape
	w.str("data.shape.kind", S.Kind)
	w.f64("data.shape.amplitude", S.Amplitude)
	w.f64("data.shape.frequency", S.Frequency)
	w.f64("data.shape.phase", S.Phase)
	w.f64("data.shape.at", S.At)
	w.f64("data.shape.left", S.Left)
	w.f64("data.shape.right", S.Right)
	w.f64s("data.shape.coefficients", S.Coefficients)
	w.f64s("data.shape.frequencies", S.Frequencies)
	w.f64s("data.shape.cos", S.Cos)
	w.f64s("data.shape.sin", S.Sin)
	w.str("data.teacher.kind", D.Teacher.Kind)
	w.str("data.teacher.link", D.Teacher.Link)
	w.int("data.teacher.width", D.Teacher.Width)
	w.str("data.noise.kind", D.Noise.Kind)
	w.f64("data.noise.sd", D.Noise.SD)
	w.f64("data.noise.df", D.Noise.DF)
	w.f64("data.corrupt", D.Corrupt)
}
