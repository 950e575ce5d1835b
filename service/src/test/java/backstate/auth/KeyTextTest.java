package backstate.auth;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.SecureRandom;
import java.util.HexFormat;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** The key format bsk_<16 hex>_<64 hex> and the salted SHA-256 stored for it. */
class KeyTextTest {
    static final String KEY = "bsk_0123456789abcdef_" + "00112233445566778899aabbccddeeff".repeat(2);

    @Test
    void generated_keys_have_the_format_and_differ() {
        SecureRandom random = new SecureRandom();
        KeyText.Parsed a = KeyText.generate(random);
        KeyText.Parsed b = KeyText.generate(random);
        assertTrue(a.text().matches("bsk_[0-9a-f]{16}_[0-9a-f]{64}"), a.text());
        assertEquals(a.text().substring(4, 20), a.id());
        assertNotEquals(a.text(), b.text());
        assertFalse(a.toString().contains(a.text().substring(21)), "toString shows the secret");
    }

    @Test
    void parse_takes_the_id_from_a_well_formed_key() {
        assertEquals("0123456789abcdef", KeyText.parse(KEY).orElseThrow().id());
    }

    @ParameterizedTest
    @ValueSource(strings = {"", "bsk_", "bsk_0123456789abcdef", "BSK_0123456789abcdef_00112233445566778899aabbccddeeff00112233445566778899aabbccddeeff",
            "bsk_0123456789ABCDEF_00112233445566778899aabbccddeeff00112233445566778899aabbccddeeff",
            "bsk_0123456789abcdef_00112233445566778899aabbccddeeff00112233445566778899aabbccddeef",
            "bsk_0123456789abcdef_00112233445566778899aabbccddeeff00112233445566778899aabbccddeeff0",
            " bsk_0123456789abcdef_00112233445566778899aabbccddeeff00112233445566778899aabbccddeeff"})
    void malformed_keys_are_refused(String text) {
        assertTrue(KeyText.parse(text).isEmpty(), text);
    }

    @Test
    void hash_is_sha256_of_salt_then_key_and_only_the_same_key_matches() throws Exception {
        byte[] salt = HexFormat.of().parseHex("000102030405060708090a0b0c0d0e0f");
        MessageDigest sha = MessageDigest.getInstance("SHA-256");
        sha.update(salt);
        byte[] expected = sha.digest(KEY.getBytes(StandardCharsets.US_ASCII));
        assertArrayEquals(expected, KeyText.hash(salt, KEY));
        assertTrue(KeyText.matches(salt, expected, KEY));
        assertFalse(KeyText.matches(salt, expected, KEY.substring(0, KEY.length() - 1) + "0"));
        byte[] otherSalt = salt.clone();
        otherSalt[0] = 1;
        assertFalse(KeyText.matches(otherSalt, expected, KEY), "the salt is part of the hash");
    }
}
