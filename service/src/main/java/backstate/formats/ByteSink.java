package backstate.formats;

import java.lang.invoke.MethodHandles;
import java.lang.invoke.VarHandle;
import java.nio.ByteOrder;
import java.util.Arrays;

/**
 * A growable byte array written front to back: bytes, big-endian ints and doubles, and unsigned
 * base-128 varints. The encoder's output; {@link ByteSource} reads it back.
 */
final class ByteSink {
    /** A double's raw bits, most significant byte first, as {@code DataOutputStream} writes them. */
    static final VarHandle BIG_ENDIAN_LONG = MethodHandles.byteArrayViewVarHandle(long[].class, ByteOrder.BIG_ENDIAN);
    /** Packed codes, low bits first: the first code's bits are the low bits of the first byte. */
    static final VarHandle LITTLE_ENDIAN_LONG = MethodHandles.byteArrayViewVarHandle(long[].class, ByteOrder.LITTLE_ENDIAN);
    /** Seven payload bits a varint byte, as in Protocol Buffers' encoding documentation (from memory). */
    static final int VARINT_PAYLOAD_BITS = 7;
    static final int VARINT_MORE = 0x80;

    private byte[] bytes;
    private int size;

    ByteSink(int capacity) {
        bytes = new byte[Math.max(capacity, Long.BYTES)];
    }

    int size() {
        return size;
    }

    /** Drops everything written after {@code mark}, an earlier {@link #size()}. */
    void truncate(int mark) {
        size = mark;
    }

    void put(int b) {
        ensure(1);
        bytes[size++] = (byte) b;
    }

    void putInt(int v) {
        ensure(Integer.BYTES);
        for (int shift = Integer.SIZE - Byte.SIZE; shift >= 0; shift -= Byte.SIZE) {
            bytes[size++] = (byte) (v >>> shift);
        }
    }

    /** Overwrites the 4 bytes at {@code at} (written earlier, e.g. as a placeholder) with {@code v}, big-endian. */
    void putIntAt(int at, int v) {
        for (int i = 0; i < Integer.BYTES; i++) {
            bytes[at + i] = (byte) (v >>> (Integer.SIZE - Byte.SIZE * (i + 1)));
        }
    }

    void putDouble(double v) {
        ensure(Long.BYTES);
        BIG_ENDIAN_LONG.set(bytes, size, Double.doubleToRawLongBits(v));
        size += Long.BYTES;
    }

    void putBytes(byte[] b) {
        ensure(b.length);
        System.arraycopy(b, 0, bytes, size, b.length);
        size += b.length;
    }

    /**
     * {@code v} (taken as unsigned) in base-128, low seven bits first, the top bit of each byte
     * set while more follow: the varint of Protocol Buffers' encoding documentation.
     */
    void putVarLong(long v) {
        ensure(Long.BYTES + 2);
        while ((v & ~(long) (VARINT_MORE - 1)) != 0) {
            bytes[size++] = (byte) (v | VARINT_MORE);
            v >>>= VARINT_PAYLOAD_BITS;
        }
        bytes[size++] = (byte) v;
    }

    /**
     * {@code codes[from, from + count)}, each in its low {@code width} bits (1..{@value BitBlocks#MAX_WIDTH}),
     * packed end to end from bit 0 of the next byte, low bits first; the last byte is padded with
     * zeros. Binary packing as in Lemire and Boytsov 2015 (see {@link BitBlocks}).
     */
    void putPacked(long[] codes, int from, int count, int width) {
        int length = (count * width + Byte.SIZE - 1) / Byte.SIZE;
        ensure(length + Long.BYTES);
        int at = size;
        long pending = 0;
        int bits = 0;
        for (int k = from; k < from + count; k++) {
            long code = codes[k];
            pending |= code << bits;
            bits += width;
            if (bits >= Long.SIZE) {
                LITTLE_ENDIAN_LONG.set(bytes, at, pending);
                at += Long.BYTES;
                bits -= Long.SIZE;
                pending = code >>> (width - bits);    // the part that did not fit (0 when none; width < 64)
            }
        }
        for (; bits > 0; bits -= Byte.SIZE) {
            bytes[at++] = (byte) pending;
            pending >>>= Byte.SIZE;
        }
        size += length;
    }

    byte[] toByteArray() {
        return Arrays.copyOf(bytes, size);
    }

    private void ensure(int more) {
        if (size + more > bytes.length) {
            bytes = Arrays.copyOf(bytes, Math.max(bytes.length * 2, size + more));
        }
    }
}
