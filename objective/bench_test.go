package objective

import (
	"math/rand/v2"
	"testing"
)

// BenchmarkKLInverseUpper reports ns per call over a spread of (q, e)
// (goal: under 1 microsecond).
func BenchmarkKLInverseUpper(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 1))
	type arg struct{ q, e float64 }
	args := make([]arg, 1024)
	for i := range args {
		args[i] = arg{rng.Float64() * 0.5, 1e-4 + 0.2*rng.Float64()}
	}
	b.ResetTimer()
	var sink float64
	for i := 0; b.Loop(); i++ {
		a := args[i%len(args)]
		v, _ := KLInverseUpper(a.q, a.e)
		sink += v
	}
	_ = sink
}

// BenchmarkCertificate reports the cost of one full certificate from the
// statistics of n = 2000 voters: r(Q), t(Q) (the O(n^2) product), KL and
// every bound (goal: under 5 ms).
func BenchmarkCertificate(b *testing.B) {
	const n, m = 2000, 5000
	rng := rand.New(rand.NewPCG(2, 2))
	risks := make([]float64, n)
	for i := range risks {
		risks[i] = 0.1 + 0.3*rng.Float64()
	}
	joint := make([]float64, n*n)
	for i := range n {
		for j := range n {
			joint[i*n+j] = risks[i] * risks[j] // independent errors
		}
		joint[i*n+i] = risks[i]
	}
	prior, q := simplexPoint(rng, n), simplexPoint(rng, n)
	b.ResetTimer()
	for b.Loop() {
		r, t, kl := GibbsRisk(q, risks), TandemRisk(q, joint), Divergence(q, prior)
		for _, f := range []func() (Bound, error){
			func() (Bound, error) { return KLBound(r, kl, m, 0.05) },
			func() (Bound, error) { return PinskerBound(r, kl, m, 0.05) },
			func() (Bound, error) { return CatoniBound(r, kl, m, 0.05, 2) },
			func() (Bound, error) { return LambdaBound(r, kl, m, 0.05) },
			func() (Bound, error) { return FirstOrderBound(r, kl, m, 0.05) },
			func() (Bound, error) { return TandemBound(t, kl, m, 0.05) },
			func() (Bound, error) { return CBound(r, t, kl, m, 0.05) },
			func() (Bound, error) { return ChebyshevCantelliBound(r, t, kl, m, 0.05) },
		} {
			if _, err := f(); err != nil {
				b.Fatal(err)
			}
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/1e6, "ms/certificate")
}

// BenchmarkLogXi reports the uncached cost of xi(m) at m = 10^7.
func BenchmarkLogXi(b *testing.B) {
	if testing.Short() {
		b.Skip("sums 5e6 terms per call")
	}
	for b.Loop() {
		xiSum(10_000_000)
	}
}
