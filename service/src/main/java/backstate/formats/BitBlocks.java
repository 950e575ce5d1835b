package backstate.formats;

/**
 * Non-negative integer codes in blocks of up to {@value #BLOCK}: one byte, the bit width w of the
 * block's largest code (1..{@value #MAX_WIDTH}), then its codes packed w bits each, low bits first —
 * the binary packing of Lemire and Boytsov, "Decoding billions of integers per second through
 * vectorization", Software: Practice and Experience 45(1), 2015 (from memory). One large code
 * widens only its own block. Any code is read with one 8-byte load, a shift and a mask, with no
 * chain from one code to the next (a varint must be parsed before the next one is found: on this
 * project's 2-core machine that chain alone took about as long as decoding format 1 whole).
 */
final class BitBlocks {
    /** Codes a block: a header of 2–4 bytes (least difference, width) costs 0.1–0.25 bits a code; 128 as in the cited paper, from memory. */
    static final int BLOCK = 128;
    /** Codes of 2 + (difference − least difference of the block) fit 56 bits for mantissas below 2^53; 7 + 56 ≤ 64, so one 8-byte window holds any code. */
    static final int MAX_WIDTH = 56;

    private BitBlocks() {
    }

    /** Writes {@code codes[from, from + count)} (each below 2^{@value #MAX_WIDTH}) as one block, at the width of its largest code. */
    static void writeBlock(ByteSink out, long[] codes, int from, int count) {
        long any = 0;
        for (int k = from; k < from + count; k++) {
            any |= codes[k];
        }
        int width = Math.max(1, Long.SIZE - Long.numberOfLeadingZeros(any));
        out.put(width);
        out.putPacked(codes, from, count, width);
    }

    /**
     * Reads blocks back: {@link #next} claims a block, {@link #code} gives its codes. One reader a
     * column, reused block after block, so decoding allocates nothing per block.
     */
    static final class Reader {
        /** A whole block and the 7 bytes an 8-byte window may reach past it. */
        private static final int TAIL_BYTES = (BLOCK * MAX_WIDTH) / Byte.SIZE + Long.BYTES - 1;

        /** The payload, or {@link #tail} for a block too near the payload's end for its windows. */
        private byte[] bytes;
        private byte[] tail;
        private int start;
        private int width;
        private long mask;

        /** Claims the next block, of {@code count} codes. */
        void next(ByteSource in, int count) {
            width = in.get();
            if (width < 1 || width > MAX_WIDTH) {
                throw new IllegalStateException("stored trace column: got a block width of " + width + " bits, expected 1.." + MAX_WIDTH);
            }
            int length = (count * width + Byte.SIZE - 1) / Byte.SIZE;
            int at = in.take(length);
            byte[] payload = in.bytes();
            mask = (1L << width) - 1;
            if (at + length + Long.BYTES - 1 <= payload.length) {
                bytes = payload;    // bytes a window reads past the block are masked off
                start = at;
            } else {
                if (tail == null) {
                    tail = new byte[TAIL_BYTES];
                }
                System.arraycopy(payload, at, tail, 0, length);
                bytes = tail;
                start = 0;
            }
        }

        int width() {
            return width;
        }

        /** Code {@code t} of the block: one 8-byte load, a shift and a mask. */
        long code(int t) {
            int bit = t * width;
            return ((long) ByteSink.LITTLE_ENDIAN_LONG.get(bytes, start + (bit >>> 3)) >>> (bit & 7)) & mask;
        }
    }
}
