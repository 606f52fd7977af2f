package dataset

import (
	"bufio"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"math"
	"strconv"

	"gonum.org/v1/gonum/mat"
)

// prepare warns about constant columns, applies standardisation and PCA as
// opt asks, and computes the fingerprint.
func (d *Dataset) prepare(opt Options) error {
	for j, c := range constantColumns(d.X, d.N, d.D) {
		if c {
			d.Warnings = append(d.Warnings, fmt.Sprintf("%s: column %s is constant (every value is %s)",
				oneLine(d.Source), strconv.Quote(d.Columns[j]), strconv.FormatFloat(d.X[j], 'g', -1, 64)))
		}
	}
	if opt.Standardize {
		Standardize(d.X, d.N, d.D)
		d.Standardized = true
	}
	if opt.PCA > 0 {
		scores, ratio, err := PCA(d.X, d.N, d.D, opt.PCA)
		if err != nil {
			return &InputError{File: d.Source, Msg: err.Error()}
		}
		d.X, d.D, d.VarianceRatio = scores, opt.PCA, ratio
		d.Columns = make([]string, opt.PCA)
		for k := range d.Columns {
			d.Columns[k] = "pc" + strconv.Itoa(k+1)
		}
	}
	if err := d.checkSmall(); err != nil {
		return err
	}
	d.Fingerprint = Fingerprint(d)
	return nil
}

// checkSmall refuses features whose largest magnitude is below
// minMagnitude (but not all zero, which is left to the caller's check
// for data without variance): their squared differences underflow.
func (d *Dataset) checkSmall() error {
	big := 0.0
	for _, v := range d.X {
		big = max(big, math.Abs(v))
	}
	if big > 0 && big < minMagnitude {
		return &InputError{File: d.Source, Msg: fmt.Sprintf(
			"every feature value is smaller than 1e-100 in magnitude (the largest is %g): squared distances would underflow to zero; rescale the data (or pass --standardize)", big)}
	}
	return nil
}

// constantColumns reports, for each of the d columns of the n×d row-major
// x, whether every value equals the first (bit-for-bit equality of
// float64 values, so 0 and -0 count as equal).
func constantColumns(x []float64, n, d int) []bool {
	c := make([]bool, d)
	if n == 0 {
		return c
	}
	for j := range c {
		c[j] = true
	}
	left := d
	for i := 1; i < n && left > 0; i++ {
		row := x[i*d : (i+1)*d]
		for j, v := range row {
			if c[j] && v != x[j] {
				c[j] = false
				left--
			}
		}
	}
	return c
}

// Standardize z-scores each column of the n×d row-major x in place:
//
//	x_ij ← (x_ij − μ_j) / σ_j,  μ_j = (1/n) Σ_i x_ij,  σ_j² = (1/n) Σ_i (x_ij − μ_j)²
//
// σ is the population standard deviation (divisor n, not n − 1), the
// convention of scikit-learn's StandardScaler. The mean is taken in two
// passes (mean, then sum of squared deviations) for accuracy. A constant
// column (every value equal) has σ = 0 and is set to 0 rather than
// divided by zero. A column whose sums overflow or whose squared
// deviations underflow (|x| near 1e308 or 1e-160) is computed on a copy
// scaled by a power of two instead, so any finite input gives finite
// z-scores. n = 0 is a no-op.
func Standardize(x []float64, n, d int) {
	if n == 0 || d == 0 {
		return
	}
	if len(x) != n*d {
		panic("dataset: Standardize: len(x) != n*d")
	}
	mean := make([]float64, d)
	ss := make([]float64, d)
	for i := 0; i < n; i++ {
		for j, v := range x[i*d : (i+1)*d] {
			mean[j] += v
		}
	}
	for j := range mean {
		mean[j] /= float64(n)
	}
	for i := 0; i < n; i++ {
		for j, v := range x[i*d : (i+1)*d] {
			r := v - mean[j]
			ss[j] += r * r
		}
	}
	constant := constantColumns(x, n, d)
	scaled := make([]bool, d)
	for j := range mean {
		if !constant[j] && (ss[j] == 0 || math.IsInf(ss[j], 0) || math.IsNaN(mean[j]) || math.IsInf(mean[j], 0)) {
			standardizeScaled(x, n, d, j)
			scaled[j] = true
		}
	}
	inv := make([]float64, d)
	for j := range inv {
		sd := math.Sqrt(ss[j] / float64(n))
		if constant[j] || sd == 0 {
			inv[j] = 0
		} else {
			inv[j] = 1 / sd
		}
	}
	for i := 0; i < n; i++ {
		row := x[i*d : (i+1)*d]
		for j := range row {
			if scaled[j] {
				continue
			}
			if inv[j] == 0 {
				row[j] = 0
			} else {
				row[j] = (row[j] - mean[j]) * inv[j]
			}
		}
	}
}

// standardizeScaled z-scores column j of the n×d row-major x in place,
// for a column whose plain sums overflow (values near the float64
// maximum) or whose squared deviations underflow (values near the
// smallest float64). It works on the column scaled by a power of two,
// 2^-e with 2^e just above the largest |x|, which is exact for normal
// numbers, so the z-scores are those of the unscaled column.
func standardizeScaled(x []float64, n, d, j int) {
	big := 0.0
	for i := 0; i < n; i++ {
		big = max(big, math.Abs(x[i*d+j]))
	}
	_, e := math.Frexp(big)
	m, q := 0.0, 0.0
	for i := 0; i < n; i++ {
		m += math.Ldexp(x[i*d+j], -e)
	}
	m /= float64(n)
	for i := 0; i < n; i++ {
		r := math.Ldexp(x[i*d+j], -e) - m
		q += r * r
	}
	sd := math.Sqrt(q / float64(n))
	for i := 0; i < n; i++ {
		if sd == 0 {
			x[i*d+j] = 0
		} else {
			x[i*d+j] = (math.Ldexp(x[i*d+j], -e) - m) / sd
		}
	}
}

// PCA returns the scores of the n×d row-major x on its first k principal
// components (an n×k row-major slice) and the fraction of the total
// variance each explains.
//
// Route: the thin singular value decomposition of the centred data matrix,
// X_c = U S Vᵀ (gonum mat.SVD with mat.SVDThinV, so U is never formed);
// the scores are X_c V_k and the explained variance ratios s_k² / Σ_j s_j².
// This works on X_c directly rather than on the covariance X_cᵀX_c/(n−1),
// whose eigen-decomposition (mat.EigenSym) would be cheaper for n ≫ d but
// squares the condition number, losing the small components' accuracy;
// it is also the route scikit-learn's PCA takes for small and
// medium data (svd_solver "full"), so the two agree to rounding. Cost:
// O(n·d²) time, one extra n×d copy of memory.
//
// Sign convention (deterministic): each component's loading vector (column
// of V) is flipped so that its entry of largest absolute value (the first
// such entry on ties) is positive.
//
// It returns an error unless 1 ≤ k ≤ min(n, d).
//
// References: Jolliffe, I. T., Principal Component Analysis, 2nd ed.,
// Springer, 2002, chapter 3.5 (PCA via the SVD).
func PCA(x []float64, n, d, k int) (scores, ratio []float64, err error) {
	if len(x) != n*d {
		panic("dataset: PCA: len(x) != n*d")
	}
	if k < 1 || k > d || k > n {
		return nil, nil, fmt.Errorf("PCA with %d components needs 1 ≤ K ≤ min(n, d) = min(%d, %d)", k, n, d)
	}
	xc := make([]float64, n*d)
	copy(xc, x)
	mean := make([]float64, d)
	for i := 0; i < n; i++ {
		for j, v := range xc[i*d : (i+1)*d] {
			mean[j] += v
		}
	}
	for j := range mean {
		mean[j] /= float64(n)
	}
	for i := 0; i < n; i++ {
		row := xc[i*d : (i+1)*d]
		for j := range row {
			row[j] -= mean[j]
		}
	}
	a := mat.NewDense(n, d, xc)
	var svd mat.SVD
	if !svd.Factorize(a, mat.SVDThinV) {
		return nil, nil, fmt.Errorf("PCA: the singular value decomposition did not converge")
	}
	s := svd.Values(nil)
	var v mat.Dense
	svd.VTo(&v)
	vk := mat.DenseCopyOf(v.Slice(0, d, 0, k))
	for c := 0; c < k; c++ {
		best, bi := -1.0, 0
		for i := 0; i < d; i++ {
			if a := math.Abs(vk.At(i, c)); a > best {
				best, bi = a, i
			}
		}
		if vk.At(bi, c) < 0 {
			for i := 0; i < d; i++ {
				vk.Set(i, c, -vk.At(i, c))
			}
		}
	}
	scores = make([]float64, n*k)
	out := mat.NewDense(n, k, scores)
	out.Mul(a, vk)
	var total float64
	for _, sv := range s {
		total += sv * sv
	}
	ratio = make([]float64, k)
	for c := range ratio {
		if total > 0 {
			ratio[c] = s[c] * s[c] / total
		}
	}
	return scores, ratio, nil
}

// fingerprintTag opens the fingerprinted byte stream; it changes if the
// layout below ever changes.
const fingerprintTag = "plumb dataset fingerprint v1\n"

// Fingerprint returns the hex SHA-256 of the data set's content, identical
// on every machine for the same values. The hashed bytes are, in order
// (integers unsigned 64-bit little-endian):
//
//	the ASCII tag "plumb dataset fingerprint v1\n"
//	N, D
//	the N·D features of X in row-major order, each as the little-endian
//	  IEEE-754 bits of the float64 (math.Float64bits; so -0 ≠ +0, but the
//	  readers store an input -0 as +0, so "-0" and "0" in a file give the
//	  same fingerprint)
//	for each of the N ids: its length in bytes, then its UTF-8 bytes
//	one byte: 1 if there are labels, 0 if not
//	if there are labels, for each of the N labels: its length, then its bytes
//
// Column names, the file name and the file format are not included, so the
// same table read from CSV, TSV, Parquet or Arrow has the same fingerprint.
func Fingerprint(d *Dataset) string {
	h := sha256.New()
	w := bufio.NewWriterSize(h, 1<<16)
	var buf [8]byte
	put := func(u uint64) {
		binary.LittleEndian.PutUint64(buf[:], u)
		w.Write(buf[:])
	}
	w.WriteString(fingerprintTag)
	put(uint64(d.N))
	put(uint64(d.D))
	for _, v := range d.X {
		put(math.Float64bits(v))
	}
	for _, id := range d.IDs {
		put(uint64(len(id)))
		w.WriteString(id)
	}
	if d.Labels == nil {
		w.WriteByte(0)
	} else {
		w.WriteByte(1)
		for _, l := range d.Labels {
			put(uint64(len(l)))
			w.WriteString(l)
		}
	}
	w.Flush()
	return hex.EncodeToString(h.Sum(nil))
}
