package backstate.auth;

import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.security.SecureRandom;
import java.util.HexFormat;
import java.util.Optional;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The key format and its hash.
 *
 * <p>A key reads {@code bsk_<id>_<secret>}: {@code id} is 16 lowercase hex digits (64 random
 * bits) and is not secret, it is the primary key the server looks the key up by, so checking a
 * key costs one indexed read and one hash, not a scan; {@code secret} is 64 hex digits (256 bits
 * from {@link SecureRandom}). Hex keeps keys copy-paste and shell safe, and lets an operator make
 * one with {@code echo bsk_$(openssl rand -hex 8)_$(openssl rand -hex 32)}.
 *
 * <p>Only {@code SHA-256(salt || key)} with a 16-byte random salt per key is stored. A slow KDF
 * (PBKDF2, scrypt, Argon2) exists to make guessing low-entropy passwords expensive; a 256-bit
 * random secret cannot be guessed at any hash speed (2^255 tries on average), so a slow KDF
 * would only add its cost (tens to hundreds of milliseconds of CPU at recommended work factors)
 * to every request. The salt costs nothing and keeps equal keys from having equal hashes.
 * Hashes are compared with {@link MessageDigest#isEqual}, which takes time independent of where
 * they differ.
 */
final class KeyText {
    static final String PREFIX = "bsk_";
    static final int ID_BYTES = 8;
    static final int SECRET_BYTES = 32;
    static final int SALT_BYTES = 16;
    private static final Pattern FORMAT = Pattern.compile(
            "bsk_([0-9a-f]{" + 2 * ID_BYTES + "})_[0-9a-f]{" + 2 * SECRET_BYTES + "}");
    private static final HexFormat HEX = HexFormat.of();

    private KeyText() {
    }

    /** A well-formed key: its ID and the whole text (which holds the secret: never log it). */
    record Parsed(String id, String text) {
        @Override
        public String toString() {
            return "key " + id;
        }
    }

    static Optional<Parsed> parse(String text) {
        if (text == null) {
            return Optional.empty();
        }
        Matcher m = FORMAT.matcher(text);
        return m.matches() ? Optional.of(new Parsed(m.group(1), text)) : Optional.empty();
    }

    static Parsed generate(SecureRandom random) {
        return parse(PREFIX + HEX.formatHex(bytes(random, ID_BYTES)) + "_" + HEX.formatHex(bytes(random, SECRET_BYTES)))
                .orElseThrow();
    }

    static byte[] salt(SecureRandom random) {
        return bytes(random, SALT_BYTES);
    }

    static byte[] hash(byte[] salt, String key) {
        try {
            MessageDigest sha = MessageDigest.getInstance("SHA-256");
            sha.update(salt);
            return sha.digest(key.getBytes(StandardCharsets.US_ASCII));
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("SHA-256 is required of every Java platform", e);
        }
    }

    static boolean matches(byte[] salt, byte[] storedHash, String key) {
        return MessageDigest.isEqual(hash(salt, key), storedHash);
    }

    private static byte[] bytes(SecureRandom random, int n) {
        byte[] b = new byte[n];
        random.nextBytes(b);
        return b;
    }
}
