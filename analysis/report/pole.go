package report

import (
	"math"

	"ringside/analysis/pole"
	"ringside/syntax"
)

func pos(off int) syntax.Pos { return syntax.Pos(off) }

func polePoint(p pole.Info) Pole {
	re, im := real(p.Z), imag(p.Z)
	return Pole{Re: re, Im: im, Radius: math.Hypot(re, im), AngleRad: p.AngleRad, FreqHz: p.FreqHz, Damping: p.Damping,
		NaturalHz: finite(p.NaturalRadS / (2 * math.Pi)), TimeConstantS: finite(p.TimeConstantS), Shape: p.ShapeText()}
}
