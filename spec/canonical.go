package spec

import (
	"fmt"
	"strconv"
	"strings"
)

// Canonical returns the resolved spec as TOML in a fixed key order, with
// every default written out and the grid (and its outer axis, if any) as
// explicit values. Floats are
// printed in the shortest form that reads back to the same float64, so
// Parse(Canonical()) gives back an equal Spec (Path and DataHash aside,
// which are not part of the text; the data hash is shown as a comment).
// Data.File is kept as written, relative to the original spec file.
func (s *Spec) Canonical() string {
	var b strings.Builder
	kv := func(k, v string) { fmt.Fprintf(&b, "%s = %s\n", k, v) }
	b.WriteString("# riskgrid spec, canonical form\n")
	kv("name", tomlString(s.Name))
	kv("about", tomlString(s.About))

	D := s.Data
	b.WriteString("\n[data]\n")
	kv("source", tomlString(D.Source))
	if !s.Grid.Sets(ParamNTrain) {
		kv("n_train", strconv.Itoa(D.NTrain))
	}
	switch D.Source {
	case SourceCSV:
		kv("file", tomlString(D.File))
		if s.DataHash != "" {
			fmt.Fprintf(&b, "# sha256 of file: %s\n", s.DataHash)
		}
		kv("target", tomlString(D.Target))
		if len(D.Features) > 0 {
			kv("features", stringArray(D.Features))
		}
		if D.NTest > 0 {
			kv("n_test", strconv.Itoa(D.NTest))
		} else {
			kv("test_fraction", fmtFloat(D.TestFraction))
		}
		kv("sampling", tomlString(D.Sampling))
	case SourceCurve, SourceTeacher:
		D.nonlinearTOML(kv)
	default:
		kv("n_test", strconv.Itoa(D.NTest))
		kv("dim", strconv.Itoa(D.Dim))
		kv("truth", tomlString(D.Truth))
		kv("spectrum", spectrumTOML(D.Spectrum))
		kv("signal", signalTOML(D.Signal))
		kv("noise", noiseTOML(D.Noise))
	}

	for _, m := range s.Models {
		b.WriteString("\n[[model]]\n")
		kv("family", tomlString(m.Family))
		kv("label", tomlString(m.Label))
		nums, choices := m.written(s.Grid.knobs()...)
		for _, n := range nums {
			kv(n.Key, fmtFloat(m.Param(n.Key)))
		}
		for _, c := range choices {
			kv(c.Key, tomlString(m.Options[c.Key]))
		}
		if Families[m.Family].Intercept {
			kv("intercept", strconv.FormatBool(m.Intercept))
		}
	}

	b.WriteString("\n[grid]\n")
	kv("param", tomlString(s.Grid.Param))
	kv("values", floatArray(s.Grid.Values))
	if o := s.Grid.Outer; o != nil {
		b.WriteString("\n[grid.outer]\n")
		kv("param", tomlString(o.Param))
		kv("values", floatArray(o.Values))
	}

	b.WriteString("\n[seeds]\n")
	kv("count", strconv.Itoa(s.Seeds.Count))
	kv("start", strconv.FormatUint(s.Seeds.Start, 10))
	kv("truth", strconv.FormatUint(s.Seeds.Truth, 10))
	kv("models", strconv.Itoa(s.Seeds.Models))

	b.WriteString("\n[tables]\n")
	kv("se_style", tomlString(s.Tables.SEStyle))
	return b.String()
}

func spectrumTOML(S Spectrum) string {
	parts := []string{"kind = " + tomlString(S.Kind)}
	switch S.Kind {
	case SpectrumPowerLaw:
		parts = append(parts, "exponent = "+fmtFloat(S.Exponent))
	case SpectrumSpiked:
		parts = append(parts, "spikes = "+strconv.Itoa(S.Spikes), "high = "+fmtFloat(S.High), "low = "+fmtFloat(S.Low))
	case SpectrumList:
		parts = append(parts, "values = "+floatArray(S.Values))
	}
	return inline(parts)
}

func signalTOML(G Signal) string {
	parts := []string{"kind = " + tomlString(G.Kind)}
	switch G.Kind {
	case SignalSphere:
		parts = append(parts, "norm = "+fmtFloat(G.Norm))
	case SignalTop:
		parts = append(parts, "top = "+strconv.Itoa(G.Top), "norm = "+fmtFloat(G.Norm))
	case SignalList:
		parts = append(parts, "values = "+floatArray(G.Values))
	}
	return inline(parts)
}

func noiseTOML(N Noise) string {
	parts := []string{"kind = " + tomlString(N.Kind), "sd = " + fmtFloat(N.SD)}
	if N.Kind == NoiseStudentT {
		parts = append(parts, "df = "+fmtFloat(N.DF))
	}
	return inline(parts)
}

func inline(parts []string) string { return "{ " + strings.Join(parts, ", ") + " }" }

// fmtFloat prints the shortest decimal that reads back to x exactly
// (strconv 'g', precision -1). TOML reads "1" as an integer, which a float
// key accepts, and "1e+21" as a float.
func fmtFloat(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func floatArray(v []float64) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = fmtFloat(x)
	}
	return "[" + strings.Join(s, ", ") + "]"
}

func stringArray(v []string) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = tomlString(x)
	}
	return "[" + strings.Join(s, ", ") + "]"
}

// tomlString writes s as a TOML basic string. Unlike strconv.Quote it uses
// only escapes TOML knows: \" \\ \b \t \n \f \r and \uXXXX for other
// control characters; every other character is written as itself.
func tomlString(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for _, r := range s {
		switch r {
		case '"':
			b.WriteString(`\"`)
		case '\\':
			b.WriteString(`\\`)
		case '\b':
			b.WriteString(`\b`)
		case '\t':
			b.WriteString(`\t`)
		case '\n':
			b.WriteString(`\n`)
		case '\f':
			b.WriteString(`\f`)
		case '\r':
			b.WriteString(`\r`)
		default:
			if r < 0x20 || r == 0x7f {
				fmt.Fprintf(&b, `\u%04X`, r)
			} else {
				b.WriteRune(r)
			}
		}
	}
	b.WriteByte('"')
	return b.String()
}
