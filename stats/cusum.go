package stats

import (
	"fmt"
	"math"
)

// CUSUMParams are the learning-curve parameters (Bolsin S, Colson M, Int J
// Qual Health Care 2000;12:433–438): the acceptable and unacceptable failure
// rates p0 and p1 and the error rates α and β. No colonoscopy paper fixes α
// and β, so they are a local choice and every result prints them.
type CUSUMParams struct {
	P0    float64 `json:"p0"`
	P1    float64 `json:"p1"`
	Alpha float64 `json:"alpha"`
	Beta  float64 `json:"beta"`
}

// DefaultCUSUM returns the defaults for unassisted caecal intubation used in
// published endoscopy CUSUM work: p0 0.10, p1 0.20, α = β = 0.10
// (clinical-reference §5).
func DefaultCUSUM() CUSUMParams { return CUSUMParams{P0: 0.10, P1: 0.20, Alpha: 0.10, Beta: 0.10} }

// Limits returns the CUSUM's step s and decision limits h0 and h1:
// P = ln(p1/p0), Q = ln((1−p0)/(1−p1)), s = Q/(P+Q),
// h0 = ln((1−α)/β)/(P+Q), h1 = ln((1−β)/α)/(P+Q). It needs 0 < p0 < p1 < 1
// and α, β in (0, 1).
func (c CUSUMParams) Limits() (s, h0, h1 float64, err error) {
	if !(c.P0 > 0 && c.P0 < c.P1 && c.P1 < 1) {
		return 0, 0, 0, fmt.Errorf("CUSUM failure rates p0 %v and p1 %v must satisfy 0 < p0 < p1 < 1", c.P0, c.P1)
	}
	if !(c.Alpha > 0 && c.Alpha < 1 && c.Beta > 0 && c.Beta < 1) {
		return 0, 0, 0, fmt.Errorf("CUSUM error rates α %v and β %v must lie between 0 and 1", c.Alpha, c.Beta)
	}
	p := math.Log(c.P1 / c.P0)
	q := math.Log((1 - c.P0) / (1 - c.P1))
	s = q / (p + q)
	h0 = math.Log((1-c.Alpha)/c.Beta) / (p + q)
	h1 = math.Log((1-c.Beta)/c.Alpha) / (p + q)
	return s, h0, h1, nil
}
