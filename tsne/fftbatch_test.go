package tsne

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/dsp/fourier"
)

// TestFFTPlanMatchesGonum checks the batched transform against gonum's
// dsp/fourier CmplxFFT (an FFTPACK translation; reference library) for
// every length 2^a·3^b used by the grid and a few edge cases, forward
// (Coefficients) and inverse (Sequence), to 1e-12 relative RMS.
func TestFFTPlanMatchesGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 9))
	for _, n := range []int{1, 2, 3, 4, 6, 8, 9, 12, 16, 27, 48, 64, 96, 324, 384, 1296, 3456} {
		pl := newFFTPlan(n)
		ref := fourier.NewCmplxFFT(n)
		x := make([]complex128, n*fftBatch)
		for i := range x {
			x[i] = complex(r.NormFloat64(), r.NormFloat64())
		}
		for _, inverse := range []bool{false, true} {
			in := append([]complex128(nil), x...)
			got := pl.transform(in, make([]complex128, len(x)), inverse)
			seq := make([]complex128, n)
			want := make([]complex128, n)
			var num, den float64
			for c := 0; c < fftBatch; c++ {
				for j := 0; j < n; j++ {
					seq[j] = x[j*fftBatch+c]
				}
				if inverse {
					ref.Sequence(want, seq)
				} else {
					ref.Coefficients(want, seq)
				}
				for k := 0; k < n; k++ {
					d := got[k*fftBatch+c] - want[k]
					num += real(d)*real(d) + imag(d)*imag(d)
					den += real(want[k])*real(want[k]) + imag(want[k])*imag(want[k])
				}
			}
			if e := math.Sqrt(num / den); !(e < 1e-12) {
				t.Errorf("n = %d, inverse %v: relative RMS difference %.3g from gonum, want < 1e-12", n, inverse, e)
			}
		}
	}
}

// TestFFTPlanDefinition checks one length against the DFT's definition
// X_k = Σ_j x_j e^{−2πi jk/n} summed directly (textbook definition).
func TestFFTPlanDefinition(t *testing.T) {
	const n = 72
	r := rand.New(rand.NewPCG(4, 1))
	x := make([]complex128, n*fftBatch)
	for i := range x {
		x[i] = complex(r.NormFloat64(), r.NormFloat64())
	}
	got := newFFTPlan(n).transform(append([]complex128(nil), x...), make([]complex128, len(x)), false)
	for c := 0; c < fftBatch; c++ {
		for k := 0; k < n; k++ {
			var want complex128
			for j := 0; j < n; j++ {
				want += x[j*fftBatch+c] * cmplx.Exp(complex(0, -2*math.Pi*float64(j*k%n)/n))
			}
			if d := cmplx.Abs(got[k*fftBatch+c] - want); d > 1e-11*(1+cmplx.Abs(want)) {
				t.Fatalf("sequence %d, X_%d = %v, want %v", c, k, got[k*fftBatch+c], want)
			}
		}
	}
}

func TestFFTPlanBadLength(t *testing.T) {
	for _, n := range []int{0, 5, 10, 7} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("newFFTPlan(%d) did not panic", n)
				}
			}()
			newFFTPlan(n)
		}()
	}
}

func BenchmarkFFTPlan(b *testing.B) {
	for _, n := range []int{1296, 3456} {
		x := make([]complex128, n*fftBatch)
		for i := range x {
			x[i] = complex(float64(i%7), float64(i%5))
		}
		w := make([]complex128, len(x))
		pl := newFFTPlan(n)
		b.Run("batched/n="+itoa(n), func(b *testing.B) {
			for b.Loop() {
				pl.transform(x, w, false)
			}
		})
		ref := fourier.NewCmplxFFT(n)
		seq := make([]complex128, n)
		b.Run("gonum×8/n="+itoa(n), func(b *testing.B) {
			for b.Loop() {
				for c := 0; c < fftBatch; c++ {
					ref.Coefficients(seq, seq)
				}
			}
		})
	}
}

// TestFFTTinyGrid: grids smaller than one batch of columns (a user may set
// MinIntervals low) still work and agree with the exact gradient on a
// compact layout (common practice: check against the exact sum). Measured
// relative RMS errors 2.6e-2, 3.8e-3 and 1.2e-3 for 1, 2 and 3 intervals;
// the bound 0.05 is the worst of them rounded up (no source). Before the
// row pass gathered only the grid's columns, these grids panicked.
func TestFFTTinyGrid(t *testing.T) {
	const n = 60
	p := fftTestP(n, 5, 8)
	y := fftTestLayout("uniform", n, 0.3, 9)
	want, _ := fftRefGradient(y, p, 1)
	for _, nb := range []int{1, 2, 3} {
		g := NewFFT(2)
		g.MinIntervals = nb
		got, _ := g.Gradient(nil, y, p, 1)
		e := fftRelRMS(got, want)
		t.Logf("%d intervals: relative RMS error %.3g", g.s.nb, e)
		if !(e < 0.05) {
			t.Errorf("%d intervals: relative RMS error %.3g", g.s.nb, e)
		}
	}
}
