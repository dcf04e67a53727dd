package data

import (
	"crypto/sha256"
	"encoding/binary"
	"math"
	"math/bits"
)

// streamDomain opens every hash input of NewStream. Changing it (or the
// layout below) changes every random number the project draws.
const streamDomain = "riskgrid.stream.v1"

// Stream is a pseudorandom stream whose algorithm the project pins itself, so
// that a result depends only on the spec and its key, never on the Go
// version: the generator is xoshiro256**, and every derived draw (uniform,
// normal, gamma, Student t, bounded integer, shuffle) is written here.
//
// A Stream is not safe for concurrent use; give each goroutine its own
// (streams are cheap: 32 bytes of state and a cached normal).
//
// Reference: "Scrambled linear pseudorandom number generators", ACM
// Transactions on Mathematical Software 47(4), 2021 (arXiv:1805.01407).
type Stream struct {
	s0, s1, s2, s3 uint64  // xoshiro256** state
	spare          float64 // second value of the last polar pair
	hasSpare       bool
}

// NewStream returns the stream named by key and coordinates. The state is
// the SHA-256 digest of the byte string
//
//	"riskgrid.stream.v1"              18 ASCII bytes
//	uint64(len(key))                  8 bytes, little-endian
//	key                               len(key) bytes
//	uint64(len(coords))               8 bytes, little-endian
//	coords[0], coords[1], …           8 bytes each, little-endian
//
// read as four little-endian uint64 words s[0..3] = digest[0:8], …,
// digest[24:32]. The lengths make the encoding injective: distinct
// (key, coords) give distinct inputs. Should the digest be all zero (the
// one state xoshiro256** cannot leave; probability 2⁻²⁵⁶), the state is
// filled with the first four outputs of SplitMix64 seeded with 0 instead.
//
// Reference: FIPS 180-4, "Secure Hash Standard", NIST 2015 (SHA-256).
func NewStream(key string, coords ...uint64) *Stream {
	h := sha256.New()
	var w [8]byte
	h.Write([]byte(streamDomain))
	binary.LittleEndian.PutUint64(w[:], uint64(len(key)))
	h.Write(w[:])
	h.Write([]byte(key))
	binary.LittleEndian.PutUint64(w[:], uint64(len(coords)))
	h.Write(w[:])
	for _, c := range coords {
		binary.LittleEndian.PutUint64(w[:], c)
		h.Write(w[:])
	}
	var d [sha256.Size]byte
	h.Sum(d[:0])
	return newStreamState([4]uint64{
		binary.LittleEndian.Uint64(d[0:]),
		binary.LittleEndian.Uint64(d[8:]),
		binary.LittleEndian.Uint64(d[16:]),
		binary.LittleEndian.Uint64(d[24:]),
	})
}

// newStreamState returns a stream with the given raw xoshiro256** state
// (for reference tests), guarded against the all-zero state.
func newStreamState(s [4]uint64) *Stream {
	if s[0]|s[1]|s[2]|s[3] == 0 {
		var x uint64
		for i := range s {
			s[i] = splitMix64(&x)
		}
	}
	return &Stream{s0: s[0], s1: s[1], s2: s[2], s3: s[3]}
}

// state returns the raw xoshiro256** state.
func (st *Stream) state() [4]uint64 { return [4]uint64{st.s0, st.s1, st.s2, st.s3} }

// splitMix64 advances *x by the golden-ratio increment and returns the
// mixed value
//
//	x += 0x9e3779b97f4a7c15
//	z = (x ⊕ x>>30)·0xbf58476d1ce4e5b9; z = (z ⊕ z>>27)·0x94d049bb133111eb
//	return z ⊕ z>>31
//
// Reference: "Fast splittable pseudorandom number generators", OOPSLA 2014
// (the mixing constants are those of the xoshiro authors' splitmix64.c).
func splitMix64(x *uint64) uint64 {
	*x += 0x9e3779b97f4a7c15
	z := *x
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// Uint64 returns the next output of xoshiro256**:
//
//	r = rotl(s1·5, 7)·9
//	t = s1<<17; s2 ⊕= s0; s3 ⊕= s1; s1 ⊕= s2; s0 ⊕= s3; s2 ⊕= t; s3 = rotl(s3, 45)
//
// Reference: "Scrambled linear pseudorandom number generators", ACM TOMS
// 2021 (the algorithm of xoshiro256starstar.c).
func (st *Stream) Uint64() uint64 {
	// Locals keep the function under the inlining budget.
	s0, s1, s2, s3 := st.s0, st.s1, st.s2, st.s3
	r := bits.RotateLeft64(s1*5, 7) * 9
	t := s1 << 17
	s2 ^= s0
	s3 ^= s1
	s1 ^= s2
	s0 ^= s3
	s2 ^= t
	s3 = bits.RotateLeft64(s3, 45)
	st.s0, st.s1, st.s2, st.s3 = s0, s1, s2, s3
	return r
}

// Float64 returns a uniform number in [0, 1) on the grid of multiples of
// 2⁻⁵³:
//
//	U = (Uint64() >> 11) · 2⁻⁵³
func (st *Stream) Float64() float64 {
	return unitFloat(st.Uint64())
}

// unitFloat maps a 64-bit draw to [0, 1) by its top 53 bits.
func unitFloat(x uint64) float64 {
	return float64(x>>11) * 0x1p-53
}

// Normal returns a standard normal number by the polar method: draw
// u, v uniform on (−1, 1) until 0 < s = u² + v² < 1, then
//
//	u·m and v·m, with m = sqrt(−2 ln s / s),
//
// are two independent N(0, 1) numbers. The first is returned, the second
// cached and returned by the next call.
//
// Reference: "A convenient method for generating normal variables", SIAM
// Review 6(3), 1964.
func (st *Stream) Normal() float64 {
	if st.hasSpare {
		st.hasSpare = false
		return st.spare
	}
	for {
		// 2U−1 = k·2⁻⁵² − 1 for U = k·2⁻⁵³ (exact), in [−1, 1); Uint64 is
		// called directly because it inlines and Float64 does not.
		u := float64(st.Uint64()>>11)*0x1p-52 - 1
		v := float64(st.Uint64()>>11)*0x1p-52 - 1
		s := u*u + v*v
		if s >= 1 || s == 0 {
			continue
		}
		m := math.Sqrt(-2 * math.Log(s) / s)
		st.spare = v * m
		st.hasSpare = true
		return u * m
	}
}

// fillNormal fills dst with standard normal numbers: exactly the values
// of len(dst) successive calls of Normal, including the cached spare on
// entry and on exit. It keeps the generator state in registers, which makes
// it faster than the calls.
func (st *Stream) fillNormal(dst []float64) {
	i := 0
	if st.hasSpare && len(dst) > 0 {
		dst[0] = st.spare
		st.hasSpare = false
		i = 1
	}
	s0, s1, s2, s3 := st.s0, st.s1, st.s2, st.s3
	next := func() uint64 { // xoshiro256**, as in Uint64
		r := bits.RotateLeft64(s1*5, 7) * 9
		t := s1 << 17
		s2 ^= s0
		s3 ^= s1
		s1 ^= s2
		s0 ^= s3
		s2 ^= t
		s3 = bits.RotateLeft64(s3, 45)
		return r
	}
	for i < len(dst) {
		u := float64(next()>>11)*0x1p-52 - 1
		v := float64(next()>>11)*0x1p-52 - 1
		s := u*u + v*v
		if s >= 1 || s == 0 {
			continue
		}
		m := math.Sqrt(-2 * math.Log(s) / s)
		dst[i] = u * m
		i++
		if i < len(dst) {
			dst[i] = v * m
			i++
		} else {
			st.spare = v * m
			st.hasSpare = true
		}
	}
	st.s0, st.s1, st.s2, st.s3 = s0, s1, s2, s3
}

// Gamma returns a Gamma(shape, 1) number (density x^(a−1) e^(−x)/Γ(a),
// mean a, variance a). For a ≥ 1, with d = a − 1/3 and c = 1/sqrt(9d),
// repeat: Z normal, v = (1 + cZ)³ (retry if v ≤ 0), U uniform, accept d·v if
//
//	U < 1 − 0.0331 Z⁴  or  ln U < Z²/2 + d(1 − v + ln v).
//
// For 0 < a < 1 it returns Gamma(a+1)·U^(1/a) (U uniform), which is
// Gamma(a) distributed. Gamma panics unless shape > 0 and finite.
//
// Reference: "A simple method for generating gamma variables", ACM
// Transactions on Mathematical Software 26(3), 2000 (including the
// shape < 1 boost of its section 6).
func (st *Stream) Gamma(shape float64) float64 {
	if !(shape > 0) || math.IsInf(shape, 1) {
		panic("data: Gamma shape must be positive and finite")
	}
	if shape < 1 {
		g := st.Gamma(shape + 1)
		// 1 − U lies in (0, 1], so the factor is never 0.
		return g * math.Pow(1-st.Float64(), 1/shape)
	}
	d := shape - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		z := st.Normal()
		v := 1 + c*z
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := st.Float64()
		z2 := z * z
		if u < 1-0.0331*z2*z2 {
			return d * v
		}
		if u > 0 && math.Log(u) < 0.5*z2+d*(1-v+math.Log(v)) {
			return d * v
		}
	}
}

// StudentT returns a Student t number with df degrees of freedom,
//
//	T = Z / sqrt(G·2/df),  Z ~ N(0, 1),  G ~ Gamma(df/2, 1),
//
// since 2G is chi-square with df degrees of freedom. Var T = df/(df−2) for
// df > 2. StudentT panics unless df > 0 and finite.
//
// Reference: the definition of the t distribution as a normal over the root
// of an independent chi-square divided by its degrees of freedom (textbook).
func (st *Stream) StudentT(df float64) float64 {
	if !(df > 0) || math.IsInf(df, 1) {
		panic("data: StudentT df must be positive and finite")
	}
	z := st.Normal()
	g := st.Gamma(df / 2)
	return z / math.Sqrt(g*2/df)
}

// Intn returns a uniform integer in [0, n) without bias, by the
// multiply-shift method with rejection: with x = Uint64(), the 128-bit
// product x·n = hi·2⁶⁴ + lo gives hi; x is redrawn while lo < 2⁶⁴ mod n.
// Intn panics if n ≤ 0.
//
// Reference: "Fast random integer generation in an interval", ACM
// Transactions on Modeling and Computer Simulation 29(1), 2019
// (arXiv:1805.10941).
func (st *Stream) Intn(n int) int {
	if n <= 0 {
		panic("data: Intn argument must be positive")
	}
	un := uint64(n)
	hi, lo := bits.Mul64(st.Uint64(), un)
	if lo < un {
		thresh := -un % un // 2⁶⁴ mod n
		for lo < thresh {
			hi, lo = bits.Mul64(st.Uint64(), un)
		}
	}
	return int(hi)
}

// PartialShuffle permutes p so that p[:k] is a uniform random ordered
// selection of k of its elements (the first k steps of a Fisher–Yates
// shuffle):
//
//	for i = 0 … k−1: j = i + Intn(len(p) − i); swap p[i], p[j].
//
// The steps do not depend on k, so for the same stream state the prefix
// chosen with k is the first k elements of the prefix chosen with any
// k' > k (nested selections). k = len(p) shuffles all of p. It panics
// unless 0 ≤ k ≤ len(p).
//
// Reference: "Algorithm 235: Random permutation", Communications of the
// ACM 7(7), 1964.
func (st *Stream) PartialShuffle(p []int, k int) {
	if k < 0 || k > len(p) {
		panic("data: PartialShuffle k out of range")
	}
	n := len(p)
	for i := 0; i < k && i < n-1; i++ {
		j := i + st.Intn(n-i)
		p[i], p[j] = p[j], p[i]
	}
}
