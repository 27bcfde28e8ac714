//! Bitmaps embedded in a figure: a PNG (via the `png` crate) written into
//! the SVG as a `data:` URI with base64 (RFC 4648 §4).

use crate::error::{Error, Result};

/// Encodes an 8-bit RGB image, row-major, `3 * width * height` bytes, as PNG.
pub fn png_rgb(width: u32, height: u32, rgb: &[u8]) -> Result<Vec<u8>> {
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, width, height);
        enc.set_color(png::ColorType::Rgb);
        enc.set_depth(png::BitDepth::Eight);
        enc.set_compression(png::Compression::High);
        let mut w = enc
            .write_header()
            .map_err(|e| Error::InvalidArgument(format!("cannot encode the density image: {e}")))?;
        w.write_image_data(rgb)
            .map_err(|e| Error::InvalidArgument(format!("cannot encode the density image: {e}")))?;
    }
    Ok(out)
}

/// Base64 with the standard alphabet and `=` padding (RFC 4648 §4).
pub fn base64(data: &[u8]) -> String {
    const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut s = String::with_capacity(data.len().div_ceil(3) * 4);
    for chunk in data.chunks(3) {
        let b = [
            chunk[0],
            *chunk.get(1).unwrap_or(&0),
            *chunk.get(2).unwrap_or(&0),
        ];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        for k in 0..4 {
            if k <= chunk.len() {
                s.push(ALPHABET[((n >> (18 - 6 * k)) & 63) as usize] as char);
            } else {
                s.push('=');
            }
        }
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_rfc4648_vectors() {
        // RFC 4648 §10 test vectors.
        for (plain, coded) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(base64(plain.as_bytes()), coded);
        }
    }

    #[test]
    fn png_has_signature_and_decodes() {
        let rgb = vec![10u8, 20, 30, 40, 50, 60];
        let bytes = png_rgb(2, 1, &rgb).unwrap();
        // PNG signature (ISO/IEC 15948, §5.2).
        assert_eq!(&bytes[..8], &[137, 80, 78, 71, 13, 10, 26, 10]);
        let dec = png::Decoder::new(std::io::Cursor::new(bytes));
        let mut r = dec.read_info().unwrap();
        let mut buf = vec![0; r.output_buffer_size().unwrap()];
        r.next_frame(&mut buf).unwrap();
        assert_eq!(&buf[..6], &rgb[..]);
    }
}
