// SHA-256 and HMAC-SHA256 through WebCrypto (a secure context: https or
// http://localhost), as lowercase hex.

const hex = (buf) => Array.from(new Uint8Array(buf), (b) => b.toString(16).padStart(2, '0')).join('');

export function hexToBytes(s) {
  const out = new Uint8Array(s.length / 2);
  for (let i = 0; i < out.length; i += 1) out[i] = parseInt(s.slice(2 * i, 2 * i + 2), 16);
  return out;
}

/** Lowercase hex SHA-256 of `bytes` (a Uint8Array or ArrayBuffer). */
export async function sha256Hex(bytes) {
  return hex(await crypto.subtle.digest('SHA-256', bytes));
}

/** Lowercase hex HMAC-SHA256 of `message` under the key given as hex. */
export async function hmacSha256Hex(keyHex, message) {
  const key = await crypto.subtle.importKey('raw', hexToBytes(keyHex), { name: 'HMAC', hash: 'SHA-256' }, false, ['sign']);
  return hex(await crypto.subtle.sign('HMAC', key, message));
}
