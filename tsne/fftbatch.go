package tsne

import "math"

// fftBatch is the number of sequences a batched transform works on at
// once: eight complex128s are two cache lines, so a strip of eight grid
// columns is read and written in whole lines, and at the largest grid
// (length 3456) the two strip buffers of a worker take 0.9 MB, within the
// per-core L2 cache of the machines we measure on.
const fftBatch = 8

// fftPlan is the discrete Fourier transform of one length n whose only
// prime factors are 2 and 3,
//
//	X_k = Σ_j x_j e^{∓2πi jk/n}   (− forward, + inverse, unscaled),
//
// applied to fftBatch sequences at a time stored interleaved: element j of
// sequence c is at index j·fftBatch + c. It is the Stockham autosort
// algorithm (decimation in frequency, radix 4, then 2, then 3; Van Loan,
// "Computational Frameworks for the Fast Fourier Transform", SIAM 1992,
// §1.7), whose innermost loop runs over contiguous memory: the batch, and
// at later stages the batch times the stride. The twiddle factors are
// computed directly from their exponent (no recurrences), so the result
// does not depend on anything but the input. A plan is read-only and may
// be shared by goroutines.
type fftPlan struct {
	n     int
	radix []int
	fwd   [][]complex128 // per stage: w^{jp} at p·(r−1) + j − 1, w = e^{−2πi/len}
	inv   [][]complex128 // the conjugates
}

// fftPlanOK reports whether n > 0 has no prime factors other than 2 and 3.
func fftPlanOK(n int) bool {
	if n < 1 {
		return false
	}
	for n%2 == 0 {
		n /= 2
	}
	for n%3 == 0 {
		n /= 3
	}
	return n == 1
}

// newFFTPlan returns the plan for length n. It panics if n has a prime
// factor other than 2 and 3.
func newFFTPlan(n int) *fftPlan {
	if !fftPlanOK(n) {
		panic("tsne: FFT length must be a product of 2s and 3s")
	}
	pl := &fftPlan{n: n}
	k := n
	for k%4 == 0 {
		pl.radix = append(pl.radix, 4)
		k /= 4
	}
	for k%2 == 0 {
		pl.radix = append(pl.radix, 2)
		k /= 2
	}
	for k%3 == 0 {
		pl.radix = append(pl.radix, 3)
		k /= 3
	}
	nn := n
	for _, r := range pl.radix {
		m := nn / r
		fw := make([]complex128, m*(r-1))
		iv := make([]complex128, m*(r-1))
		for p := 0; p < m; p++ {
			for j := 1; j < r; j++ {
				e := j * p % nn
				s, c := math.Sincos(2 * math.Pi * float64(e) / float64(nn))
				fw[p*(r-1)+j-1] = complex(c, -s)
				iv[p*(r-1)+j-1] = complex(c, s)
			}
		}
		pl.fwd = append(pl.fwd, fw)
		pl.inv = append(pl.inv, iv)
		nn = m
	}
	return pl
}

// transform computes the transforms of the fftBatch sequences in x
// (length n·fftBatch), using work (the same length) as scratch, and
// returns the slice holding the result: x or work.
func (pl *fftPlan) transform(x, work []complex128, inverse bool) []complex128 {
	if len(x) != pl.n*fftBatch || len(work) != len(x) {
		panic("tsne: FFT buffer length mismatch")
	}
	src, dst := x, work
	s, nn := 1, pl.n
	for st, r := range pl.radix {
		m := nn / r
		tw := pl.fwd[st]
		if inverse {
			tw = pl.inv[st]
		}
		sb := s * fftBatch
		switch r {
		case 4:
			fftStage4(src, dst, m, sb, tw, inverse)
		case 2:
			fftStage2(src, dst, m, sb, tw)
		case 3:
			fftStage3(src, dst, m, sb, tw, inverse)
		}
		src, dst = dst, src
		s *= r
		nn = m
	}
	return src
}

// The stages map the r blocks x[sb·(p + k·m) : +sb], k < r, to the r
// blocks y[sb·(r·p + j) : +sb], j < r: an r-point DFT across the blocks,
// output j multiplied by the twiddle w^{jp}. For p = 0 every twiddle is 1
// and the multiplication is skipped.

func fftStage2(x, y []complex128, m, sb int, tw []complex128) {
	for p := 0; p < m; p++ {
		a0 := x[sb*p : sb*p+sb]
		a1 := x[sb*(p+m) : sb*(p+m)+sb]
		y0 := y[sb*2*p : sb*2*p+sb]
		y1 := y[sb*(2*p+1) : sb*(2*p+1)+sb]
		a1, y0, y1 = a1[:len(a0)], y0[:len(a0)], y1[:len(a0)]
		if p == 0 {
			for t, u := range a0 {
				v := a1[t]
				y0[t] = u + v
				y1[t] = u - v
			}
			continue
		}
		w := tw[p]
		for t, u := range a0 {
			v := a1[t]
			y0[t] = u + v
			y1[t] = (u - v) * w
		}
	}
}

func fftStage4(x, y []complex128, m, sb int, tw []complex128, inverse bool) {
	for p := 0; p < m; p++ {
		a0 := x[sb*p : sb*p+sb]
		a1 := x[sb*(p+m) : sb*(p+m)+sb]
		a2 := x[sb*(p+2*m) : sb*(p+2*m)+sb]
		a3 := x[sb*(p+3*m) : sb*(p+3*m)+sb]
		o := sb * 4 * p
		y0 := y[o : o+sb]
		y1 := y[o+sb : o+2*sb]
		y2 := y[o+2*sb : o+3*sb]
		y3 := y[o+3*sb : o+4*sb]
		n := len(a0)
		a1, a2, a3 = a1[:n], a2[:n], a3[:n]
		y0, y1, y2, y3 = y0[:n], y1[:n], y2[:n], y3[:n]
		w1, w2, w3 := complex(1, 0), complex(1, 0), complex(1, 0)
		if p > 0 {
			w1, w2, w3 = tw[3*p], tw[3*p+1], tw[3*p+2]
		}
		for t, u0 := range a0 {
			u1, u2, u3 := a1[t], a2[t], a3[t]
			t0, t1 := u0+u2, u0-u2
			t2, d := u1+u3, u1-u3
			// t3 = ∓i·d: −i forward, +i inverse.
			t3 := complex(imag(d), -real(d))
			if inverse {
				t3 = complex(-imag(d), real(d))
			}
			if p == 0 {
				y0[t] = t0 + t2
				y1[t] = t1 + t3
				y2[t] = t0 - t2
				y3[t] = t1 - t3
				continue
			}
			y0[t] = t0 + t2
			y1[t] = (t1 + t3) * w1
			y2[t] = (t0 - t2) * w2
			y3[t] = (t1 - t3) * w3
		}
	}
}

func fftStage3(x, y []complex128, m, sb int, tw []complex128, inverse bool) {
	// e^{∓2πi/3} = −1/2 ∓ i·√3/2.
	c := math.Sqrt(3) / 2
	if !inverse {
		c = -c
	}
	for p := 0; p < m; p++ {
		a0 := x[sb*p : sb*p+sb]
		a1 := x[sb*(p+m) : sb*(p+m)+sb]
		a2 := x[sb*(p+2*m) : sb*(p+2*m)+sb]
		o := sb * 3 * p
		y0 := y[o : o+sb]
		y1 := y[o+sb : o+2*sb]
		y2 := y[o+2*sb : o+3*sb]
		n := len(a0)
		a1, a2 = a1[:n], a2[:n]
		y0, y1, y2 = y0[:n], y1[:n], y2[:n]
		w1, w2 := complex(1, 0), complex(1, 0)
		if p > 0 {
			w1, w2 = tw[2*p], tw[2*p+1]
		}
		for t, u0 := range a0 {
			u1, u2 := a1[t], a2[t]
			s, d := u1+u2, u1-u2
			h := u0 - complex(0.5*real(s), 0.5*imag(s))
			// t3 = ±i·(√3/2)·d with the sign of the direction: c·(i·d).
			t3 := complex(-c*imag(d), c*real(d))
			if p == 0 {
				y0[t] = u0 + s
				y1[t] = h + t3
				y2[t] = h - t3
				continue
			}
			y0[t] = u0 + s
			y1[t] = (h + t3) * w1
			y2[t] = (h - t3) * w2
		}
	}
}
