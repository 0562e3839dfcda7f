package rundir

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"os"

	"tautline/chains"
	"tautline/internal/safeio"
)

// Checkpoint is checkpoint.bin. The file holds the sampler's complete state and the length of
// chain.csv when it was taken, so that --resume truncates the chain to that
// length and continues byte for byte. Layout: the magic "tautline-ckpt 1\n",
// the chain length (8 bytes, little-endian), the state's length (8 bytes),
// the state (the sampler's own checksummed encoding), and a CRC-32 (IEEE)
// of everything before it.
type Checkpoint struct {
	// ChainOffset is the length of chain.csv in bytes.
	ChainOffset int64
	// State is the sampler's encoding of its state.
	State []byte
}

const checkpointMagic = "tautline-ckpt 1\n"

// WriteCheckpoint writes ck to path atomically.
func WriteCheckpoint(path string, ck Checkpoint) error {
	return chains.WriteFileAtomic(path, func(w io.Writer) error {
		var b bytes.Buffer
		b.WriteString(checkpointMagic)
		_ = binary.Write(&b, binary.LittleEndian, ck.ChainOffset)
		_ = binary.Write(&b, binary.LittleEndian, int64(len(ck.State)))
		b.Write(ck.State)
		_ = binary.Write(&b, binary.LittleEndian, crc32.ChecksumIEEE(b.Bytes()))
		_, err := w.Write(b.Bytes())
		return err
	})
}

// ErrCheckpointCorrupt is returned for a checkpoint that fails its checks.
var ErrCheckpointCorrupt = errors.New("checkpoint is corrupt (truncated or altered); it cannot be resumed")

// ReadCheckpoint reads and checks the checkpoint at path, refusing a
// file that is not a regular file or is larger than
// safeio.LimitCheckpoint. A caller that knows the run's settings should
// use ReadCheckpointLimit with CheckpointLimit instead.
func ReadCheckpoint(path string) (Checkpoint, error) {
	return ReadCheckpointLimit(path, safeio.LimitCheckpoint)
}

// CheckpointLimit is the largest checkpoint.bin a run of walkers walkers
// per rung, dim sampled parameters and rungs rungs can write within steps
// steps, with slack: the sampler's state holds per rung the positions,
// three densities per walker and a random stream per walker, and its
// history 8 bytes per step, walker and (parameter + rung). Pass the
// largest steps any run into the folder may have used (a resumed run may
// have been started with more steps than it is continued with). The
// result is at least 1 MiB and at most safeio.LimitCheckpoint.
func CheckpointLimit(walkers, dim, rungs, steps int) int64 {
	w, d, r, s := float64(max(walkers, 0)), float64(max(dim, 0)), float64(max(rungs, 1)), float64(max(steps, 0))
	state := r*w*(8*(d+3)+64) + r*4096
	hist := 8 * s * w * (d + r)
	bound := (state+hist)*1.125 + float64(safeio.MiB)
	if !(bound < float64(safeio.LimitCheckpoint)) {
		return safeio.LimitCheckpoint
	}
	return int64(bound)
}

// ReadCheckpointLimit is ReadCheckpoint with the size cap limit (see
// CheckpointLimit).
func ReadCheckpointLimit(path string, limit int64) (Checkpoint, error) {
	raw, err := safeio.ReadFile(path, limit)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return Checkpoint{}, fmt.Errorf("%s: no checkpoint to resume from (run without --resume first)", path)
		}
		return Checkpoint{}, err
	}
	n := len(checkpointMagic)
	if len(raw) < n+20 || string(raw[:n]) != checkpointMagic {
		return Checkpoint{}, fmt.Errorf("%s: %w", path, ErrCheckpointCorrupt)
	}
	body, sum := raw[:len(raw)-4], binary.LittleEndian.Uint32(raw[len(raw)-4:])
	if crc32.ChecksumIEEE(body) != sum {
		return Checkpoint{}, fmt.Errorf("%s: %w", path, ErrCheckpointCorrupt)
	}
	off := int64(binary.LittleEndian.Uint64(raw[n:]))
	size := int64(binary.LittleEndian.Uint64(raw[n+8:]))
	if size != int64(len(body)-n-16) || off < 0 {
		return Checkpoint{}, fmt.Errorf("%s: %w", path, ErrCheckpointCorrupt)
	}
	return Checkpoint{ChainOffset: off, State: body[n+16:]}, nil
}
