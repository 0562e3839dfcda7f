package sampler

import (
	"encoding/binary"
	"errors"
	"math/bits"
)

// pcg is math/rand/v2's PCG source, a 128-bit linear congruential
// generator with the DXSM output function (O'Neill 2014; the DXSM variant
// of the PCG reference implementation), with the same states, the same
// outputs and the same binary encoding, so that a rand.Rand over a *pcg
// and one over a rand.PCG in the same state draw the same numbers. Its
// state is in reach, which lets the hot loops keep it in registers and
// take two steps at once (next2). Adapted from Go's math/rand/v2,
// BSD-style licence, see Go's LICENSE.
type pcg struct {
	hi, lo uint64
}

// The multiplier and increment of math/rand/v2's PCG, and those of two
// steps at once: s -> (s mul + inc) mul + inc = s mul^2 + (inc mul + inc)
// mod 2^128, computed in Go's exact constant arithmetic.
const (
	pcgMulHi = 2549297995355413924
	pcgMulLo = 4865540595714422341
	pcgIncHi = 6364136223846793005
	pcgIncLo = 1442695040888963407

	pcgMul  = pcgMulHi<<64 | pcgMulLo
	pcgInc  = pcgIncHi<<64 | pcgIncLo
	pcgMul2 = pcgMul * pcgMul % (1 << 128)
	pcgInc2 = (pcgInc*pcgMul + pcgInc) % (1 << 128)

	pcgMul2Hi = pcgMul2 >> 64
	pcgMul2Lo = pcgMul2 & (1<<64 - 1)
	pcgInc2Hi = pcgInc2 >> 64
	pcgInc2Lo = pcgInc2 & (1<<64 - 1)
)

// affine returns the state s mul + inc mod 2^128, mul = mulHi 2^64 + mulLo
// and inc likewise.
func (p pcg) affine(mulHi, mulLo, incHi, incLo uint64) pcg {
	hi, lo := bits.Mul64(p.lo, mulLo)
	hi += p.hi*mulLo + p.lo*mulHi
	lo, c := bits.Add64(lo, incLo, 0)
	hi, _ = bits.Add64(hi, incHi, c)
	return pcg{hi, lo}
}

// next returns the state after p.
func (p pcg) next() pcg { return p.affine(pcgMulHi, pcgMulLo, pcgIncHi, pcgIncLo) }

// next2 returns the state two steps after p, p.next().next(), in one step.
func (p pcg) next2() pcg { return p.affine(pcgMul2Hi, pcgMul2Lo, pcgInc2Hi, pcgInc2Lo) }

// value is the output of the step that reached the state p (DXSM, "double
// xorshift multiply").
func (p pcg) value() uint64 {
	const cheapMul = 0xda942042e4dd58b5
	hi := p.hi
	hi ^= hi >> 32
	hi *= cheapMul
	hi ^= hi >> 48
	hi *= p.lo | 1
	return hi
}

// Uint64 implements rand.Source: it steps the state and returns the
// output, as rand.PCG.Uint64 does. It is next and value written out, the
// way rand.PCG.Uint64 is, so that the compiler inlines it.
func (p *pcg) Uint64() uint64 {
	hi, lo := bits.Mul64(p.lo, pcgMulLo)
	hi += p.hi*pcgMulLo + p.lo*pcgMulHi
	lo, c := bits.Add64(lo, pcgIncLo, 0)
	hi, _ = bits.Add64(hi, pcgIncHi, c)
	p.lo = lo
	p.hi = hi
	const cheapMul = 0xda942042e4dd58b5
	hi ^= hi >> 32
	hi *= cheapMul
	hi ^= hi >> 48
	hi *= lo | 1
	return hi
}

// errPCGEncoding reports an encoding that is not a PCG state.
var errPCGEncoding = errors.New("invalid PCG encoding")

// MarshalBinary encodes the state as rand.PCG.MarshalBinary does: "pcg:"
// and the two halves of the state, big-endian.
func (p *pcg) MarshalBinary() ([]byte, error) {
	b := append(make([]byte, 0, 20), "pcg:"...)
	b = binary.BigEndian.AppendUint64(b, p.hi)
	b = binary.BigEndian.AppendUint64(b, p.lo)
	return b, nil
}

// UnmarshalBinary decodes what MarshalBinary (or rand.PCG.MarshalBinary)
// encodes.
func (p *pcg) UnmarshalBinary(data []byte) error {
	if len(data) != 20 || string(data[:4]) != "pcg:" {
		return errPCGEncoding
	}
	p.hi = binary.BigEndian.Uint64(data[4:])
	p.lo = binary.BigEndian.Uint64(data[12:])
	return nil
}
