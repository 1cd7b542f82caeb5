//! HMAC-SHA256 signing of a return (RFC 2104 with SHA-256, as tested in
//! RFC 4231). The MAC covers the exact bytes of `return-manifest.json`,
//! which lists the SHA-256 of every other entry. Verification compares in
//! constant time (`hmac`'s `verify_slice`).

use hmac::{Hmac, KeyInit, Mac};
use serde::{Deserialize, Serialize};
use sha2::Sha256;

use crate::SyncError;

/// The only algorithm name accepted in `signature.json`.
pub const SIGNATURE_ALGORITHM: &str = "HMAC-SHA256";

type HmacSha256 = Hmac<Sha256>;

/// Contents of `signature.json`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Signature {
    /// Always [`SIGNATURE_ALGORITHM`].
    pub algorithm: String,
    /// Id of the upload key, as in the bundle.
    pub key_id: String,
    /// HMAC-SHA256 of the manifest bytes, lowercase hex.
    pub mac: String,
}

/// HMAC-SHA256 of `message` under `key` (any key length).
pub fn hmac_sha256(key: &[u8], message: &[u8]) -> [u8; 32] {
    // HMAC takes keys of any length (RFC 2104 §2), so new_from_slice cannot fail.
    let mut mac = match HmacSha256::new_from_slice(key) {
        Ok(m) => m,
        Err(_) => return [0; 32],
    };
    mac.update(message);
    mac.finalize().into_bytes().into()
}

/// The signature of `manifest_bytes` under `key` named `key_id`.
pub fn sign_manifest(key_id: &str, key: &[u8; 32], manifest_bytes: &[u8]) -> Signature {
    Signature {
        algorithm: SIGNATURE_ALGORITHM.into(),
        key_id: key_id.into(),
        mac: hex::encode(hmac_sha256(key, manifest_bytes)),
    }
}

/// Checks `signature` over `manifest_bytes` under `key`, comparing in constant time.
pub fn verify_manifest(
    signature: &Signature,
    key: &[u8; 32],
    manifest_bytes: &[u8],
) -> Result<(), SyncError> {
    let bad = |reason: &str| SyncError::BadSignature {
        reason: reason.into(),
    };
    if signature.algorithm != SIGNATURE_ALGORITHM {
        return Err(bad("algorithm must be HMAC-SHA256"));
    }
    let mut tag = [0u8; 32];
    hex::decode_to_slice(&signature.mac, &mut tag)
        .map_err(|_| bad("mac must be 64 hexadecimal digits"))?;
    let mut mac = HmacSha256::new_from_slice(key).map_err(|_| bad("unusable key"))?;
    mac.update(manifest_bytes);
    mac.verify_slice(&tag)
        .map_err(|_| bad("MAC does not match: the return was altered or signed with another key"))
}

#[cfg(test)]
mod tests {
    use super::*;
    use sha2::Digest;

    fn h(s: &str) -> Vec<u8> {
        hex::decode(s).expect("hex")
    }

    /// RFC 4231 §4.2-4.8, test cases 1-4, 6, 7 (HMAC-SHA-256 lines). Case 5
    /// (truncated output) does not apply.
    #[test]
    fn rfc4231_vectors() {
        let long_key = vec![0xaa; 131];
        let cases: [(Vec<u8>, Vec<u8>, &str); 6] = [
            // Test case 1
            (
                vec![0x0b; 20],
                b"Hi There".to_vec(),
                "b0344c61d8db38535ca8afceaf0bf12b881dc200c9833da726e9376c2e32cff7",
            ),
            // Test case 2
            (
                b"Jefe".to_vec(),
                b"what do ya want for nothing?".to_vec(),
                "5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843",
            ),
            // Test case 3
            (
                vec![0xaa; 20],
                vec![0xdd; 50],
                "773ea91e36800e46854db8ebd09181a72959098b3ef8c122d9635514ced565fe",
            ),
            // Test case 4
            (
                h("0102030405060708090a0b0c0d0e0f10111213141516171819"),
                vec![0xcd; 50],
                "82558a389a443c0ea4cc819899f2083a85f0faa3e578f8077a2e3ff46729665b",
            ),
            // Test case 6
            (
                long_key.clone(),
                b"Test Using Larger Than Block-Size Key - Hash Key First".to_vec(),
                "60e431591ee0b67f0d8a26aacbf5b77f8e0bc6213728c5140546040f0ee37f54",
            ),
            // Test case 7
            (
                long_key,
                b"This is a test using a larger than block-size key and a larger than block-size data. The key needs to be hashed before being used by the HMAC algorithm.".to_vec(),
                "9b09ffa71b942fcb27635fbcd5b0e944bfdc63644f0713938a7f51535c3a35e2",
            ),
        ];
        for (i, (key, data, want)) in cases.iter().enumerate() {
            assert_eq!(hex::encode(hmac_sha256(key, data)), *want, "case index {i}");
        }
    }

    /// FIPS 180-2 Appendix B.1-B.3 SHA-256 examples.
    #[test]
    fn fips180_2_sha256() {
        let hex256 = |b: &[u8]| hex::encode(Sha256::digest(b));
        assert_eq!(
            hex256(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert_eq!(
            hex256(b"abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"),
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1"
        );
        assert_eq!(
            hex256(&vec![b'a'; 1_000_000]),
            "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0"
        );
    }

    #[test]
    fn sign_and_verify() {
        let key = [7u8; 32];
        let sig = sign_manifest("uk-1", &key, b"manifest");
        assert!(verify_manifest(&sig, &key, b"manifest").is_ok());
        assert!(verify_manifest(&sig, &key, b"manifesT").is_err());
        assert!(verify_manifest(&sig, &[8u8; 32], b"manifest").is_err());
        let mut other = sig.clone();
        other.algorithm = "HMAC-SHA1".into();
        assert!(verify_manifest(&other, &key, b"manifest").is_err());
        other = sig;
        other.mac.truncate(10);
        assert!(verify_manifest(&other, &key, b"manifest").is_err());
    }
}
