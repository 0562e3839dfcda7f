package main

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"os"

	"tautline/chains"
)

// A checkpoint file holds the sampler's complete state and the length of
// chain.csv when it was taken, so that --resume truncates the chain to that
// length and continues byte for byte. Layout: the magic "tautline-ckpt 1\n",
// the chain length (8 bytes, little-endian), the state's length (8 bytes),
// the state (the sampler's own checksummed encoding), and a CRC-32 (IEEE)
// of everything before it.
type checkpoint struct {
	chainOffset int64
	state       []byte
}

const checkpointMagic = "tautline-ckpt 1\n"

func saveCheckpoint(path string, ck checkpoint) error {
	return chains.WriteFileAtomic(path, func(w io.Writer) error {
		var b bytes.Buffer
		b.WriteString(checkpointMagic)
		_ = binary.Write(&b, binary.LittleEndian, ck.chainOffset)
		_ = binary.Write(&b, binary.LittleEndian, int64(len(ck.state)))
		b.Write(ck.state)
		_ = binary.Write(&b, binary.LittleEndian, crc32.ChecksumIEEE(b.Bytes()))
		_, err := w.Write(b.Bytes())
		return err
	})
}

var errCheckpointCorrupt = errors.New("checkpoint is corrupt (truncated or altered); it cannot be resumed")

func readCheckpoint(path string) (checkpoint, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return checkpoint{}, fmt.Errorf("%s: no checkpoint to resume from (run without --resume first)", path)
		}
		return checkpoint{}, err
	}
	n := len(checkpointMagic)
	if len(raw) < n+20 || string(raw[:n]) != checkpointMagic {
		return checkpoint{}, fmt.Errorf("%s: %w", path, errCheckpointCorrupt)
	}
	body, sum := raw[:len(raw)-4], binary.LittleEndian.Uint32(raw[len(raw)-4:])
	if crc32.ChecksumIEEE(body) != sum {
		return checkpoint{}, fmt.Errorf("%s: %w", path, errCheckpointCorrupt)
	}
	off := int64(binary.LittleEndian.Uint64(raw[n:]))
	size := int64(binary.LittleEndian.Uint64(raw[n+8:]))
	if size != int64(len(body)-n-16) || off < 0 {
		return checkpoint{}, fmt.Errorf("%s: %w", path, errCheckpointCorrupt)
	}
	return checkpoint{chainOffset: off, state: body[n+16:]}, nil
}
