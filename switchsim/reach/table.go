package reach

import (
	"bytes"
	"hash/maphash"
)

// table is the set of states found: fixed-length packed keys in chunks of
// at most 1 MiB (so growing copies little) and an open-addressing index of
// state numbers.
// A state costs its key's bytes and, at most half full, two index slots.
type table struct {
	keyLen   int
	perChunk int
	chunks   [][]byte
	slots    []int32 // state number + 1; 0 is empty
	n        int
	seed     maphash.Seed
}

func newTable(keyLen int) *table {
	per := 1
	if keyLen > 0 {
		per = max(1, (1<<20)/keyLen)
	} else {
		per = 1 << 20
	}
	return &table{keyLen: keyLen, perChunk: per, slots: make([]int32, 1024), seed: maphash.MakeSeed()}
}

// key returns state id's key (shared: do not change it).
func (t *table) key(id int32) []byte {
	c, i := int(id)/t.perChunk, int(id)%t.perChunk
	return t.chunks[c][i*t.keyLen : (i+1)*t.keyLen]
}

// find returns the state with key k, or false.
func (t *table) find(k []byte) (int32, bool) {
	mask := uint64(len(t.slots) - 1)
	for i := maphash.Bytes(t.seed, k) & mask; ; i = (i + 1) & mask {
		s := t.slots[i]
		if s == 0 {
			return -1, false
		}
		if bytes.Equal(t.key(s-1), k) {
			return s - 1, true
		}
	}
}

// add stores k, which must not be present, and returns its state number.
func (t *table) add(k []byte) int32 {
	if 2*(t.n+1) > len(t.slots) {
		t.grow()
	}
	id := int32(t.n)
	c := t.n / t.perChunk
	if c == len(t.chunks) {
		// The first chunk starts small and grows by append (a small design
		// never pays for a whole chunk); later ones are made whole.
		size := t.perChunk * t.keyLen
		if c == 0 {
			size = min(size, 64*t.keyLen)
		}
		t.chunks = append(t.chunks, make([]byte, 0, size))
	}
	t.chunks[c] = append(t.chunks[c], k...)
	t.n++
	t.place(id)
	return id
}

func (t *table) place(id int32) {
	mask := uint64(len(t.slots) - 1)
	for i := maphash.Bytes(t.seed, t.key(id)) & mask; ; i = (i + 1) & mask {
		if t.slots[i] == 0 {
			t.slots[i] = id + 1
			return
		}
	}
}

func (t *table) grow() {
	t.slots = make([]int32, 2*len(t.slots))
	for id := 0; id < t.n; id++ {
		t.place(int32(id))
	}
}

// bytes is the table's memory: keys and index.
func (t *table) bytes() int64 {
	return int64(len(t.chunks))*int64(t.perChunk*t.keyLen) + 4*int64(len(t.slots))
}
