//! Standard base64 (RFC 4648 §4, with `=` padding), only the encoder: the sheet inlines its
//! PNG images as `data:` URIs so that the page needs no other file.

const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";

/// Encodes `bytes` as base64 with padding.
pub fn encode(bytes: &[u8]) -> String {
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [
            chunk[0],
            chunk.get(1).copied().unwrap_or(0),
            chunk.get(2).copied().unwrap_or(0),
        ];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        let sextet = |shift: u32| char::from(ALPHABET[((n >> shift) & 0x3f) as usize]);
        out.push(sextet(18));
        out.push(sextet(12));
        out.push(if chunk.len() > 1 { sextet(6) } else { '=' });
        out.push(if chunk.len() > 2 { sextet(0) } else { '=' });
    }
    out
}

/// A `data:` URI holding a PNG image.
pub fn png_data_uri(png: &[u8]) -> String {
    format!("data:image/png;base64,{}", encode(png))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rfc4648_test_vectors() {
        // RFC 4648 §10 "Test Vectors".
        let cases = [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ];
        for (plain, coded) in cases {
            assert_eq!(encode(plain.as_bytes()), coded, "{plain:?}");
        }
    }

    #[test]
    fn high_bytes_use_the_last_alphabet_letters() {
        // 0xFB 0xFF = 111110 111111 1111(00): RFC 4648 Table 1 gives '+' (62) and '/' (63).
        assert_eq!(encode(&[0xfb, 0xff]), "+/8=");
        assert_eq!(
            png_data_uri(&[0x89, b'P']),
            "data:image/png;base64,iVA=",
            "0x89 0x50 -> 100010 010101 0000(00) = i V A (RFC 4648 Table 1)"
        );
    }
}
