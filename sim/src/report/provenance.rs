//! Where a report's numbers come from: each input file's name, size and SHA-256.

use std::io::Read;

use sha2::{Digest, Sha256};

use crate::error::SimError;

/// SHA-256 of a file, as lowercase hex, and its length in bytes.
///
/// # Errors
/// [`SimError::Io`] naming the file.
pub fn sha256_file(path: &str) -> Result<(String, u64), SimError> {
    let mut f = std::fs::File::open(path).map_err(|e| SimError::io(path, e))?;
    let mut h = Sha256::new();
    let mut buf = vec![0u8; 1 << 16];
    let mut len = 0u64;
    loop {
        let n = f.read(&mut buf).map_err(|e| SimError::io(path, e))?;
        if n == 0 {
            break;
        }
        h.update(buf.get(..n).unwrap_or_default());
        len += n as u64;
    }
    Ok((hex(&h.finalize()), len))
}

/// SHA-256 of bytes, as lowercase hex.
pub fn sha256(bytes: &[u8]) -> String {
    hex(&Sha256::digest(bytes))
}

fn hex(b: &[u8]) -> String {
    use std::fmt::Write;
    b.iter().fold(String::with_capacity(64), |mut s, x| {
        let _ = write!(s, "{x:02x}");
        s
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// [pub] FIPS 180-2, appendix B.1: SHA-256("abc").
    #[test]
    fn sha256_of_abc() {
        assert_eq!(
            sha256(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    /// [pub] FIPS 180-2, appendix B.2 (the 448-bit message), through the file path.
    #[test]
    fn sha256_of_a_file() {
        let dir = std::env::temp_dir().join(format!("cw-sha-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap_or_default();
        let p = dir.join("m.txt");
        std::fs::write(
            &p,
            "abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq",
        )
        .unwrap_or_default();
        let (h, n) = sha256_file(&p.display().to_string()).unwrap_or_default();
        assert_eq!(n, 56);
        assert_eq!(
            h,
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1"
        );
        let _ = std::fs::remove_dir_all(&dir);
    }
}
