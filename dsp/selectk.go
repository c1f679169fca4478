package dsp

// SelectK returns the k-th smallest element of x (0-based), reordering x
// in place without allocating: C. A. R. Hoare's selection ("Algorithm 65:
// Find", Comm. ACM, 1961; cited from memory). The order statistics of
// spectra and salience, a quantile without a sort.
func SelectK(x []float32, k int) float32 {
	lo, hi := 0, len(x)-1
	for lo < hi {
		p := x[(lo+hi)/2]
		i, j := lo, hi
		for i <= j {
			for x[i] < p {
				i++
			}
			for x[j] > p {
				j--
			}
			if i <= j {
				x[i], x[j] = x[j], x[i]
				i++
				j--
			}
		}
		if k <= j {
			hi = j
		} else if k >= i {
			lo = i
		} else {
			return x[k]
		}
	}
	return x[k]
}
