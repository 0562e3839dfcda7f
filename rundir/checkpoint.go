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

// Checkpoint is checkpoint.bin. The file holds the sampler's state (not
// its history, which --resume reads back from chain.csv and, in a tempered
// fit, RungsFile, so that the file's size does not grow with the run) and
// the length of chain.csv when it was taken, so that --resume truncates the
// chain to that length and continues byte for byte. Layout: the magic "tautline-ckpt 1\n",
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

// ReadCheckpoint reads and checks the checkpoint at path, a regular file
// of at most safeio.LimitCheckpoint.
func ReadCheckpoint(path string) (Checkpoint, error) {
	return ReadCheckpointLimit(path, safeio.LimitCheckpoint)
}

// ReadCheckpointLimit reads and checks the checkpoint at path, refusing
// before reading it a path that is not a regular file (a named pipe would
// block), a file above safeio.LimitCheckpoint or above limit when limit is
// larger (the outer cap), and then a file above limit, the most that the
// caller's settings can have written.
func ReadCheckpointLimit(path string, limit int64) (Checkpoint, error) {
	raw, err := readCheckpointFile(path, limit)
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

// readCheckpointFile applies ReadCheckpointLimit's two caps.
func readCheckpointFile(path string, limit int64) ([]byte, error) {
	outer := max(limit, safeio.LimitCheckpoint)
	f, err := safeio.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if fi, err := f.Stat(); err == nil && fi.Size() > outer {
		return nil, &safeio.LimitError{Path: path, Limit: outer, Size: fi.Size()}
	} else if err == nil && fi.Size() > limit {
		return nil, fmt.Errorf("%w (the most this run's walkers, parameters and rungs can write: is it another run's checkpoint?)", &safeio.LimitError{Path: path, Limit: limit, Size: fi.Size()})
	}
	raw, err := io.ReadAll(io.LimitReader(f, limit+1))
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if int64(len(raw)) > limit {
		return nil, &safeio.LimitError{Path: path, Limit: limit, Size: -1}
	}
	return raw, nil
}
