//! Provenance inside figure files: an SVG `<metadata>` element and PNG text
//! chunks carrying the program version, the disk hash and the resolved disk
//! file, so a figure can be traced to its inputs and remade with
//! `nivalis figure` from the exported disk. Format-level only: the figure
//! itself is drawn by `nivalis-charts`; the CLI and the page both call these.

use crate::provenance::Provenance;

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Insert a `<metadata>` element right after the opening `<svg ...>` tag.
/// `view` names the view drawn (e.g. "c_to_o").
pub fn embed_svg_provenance(svg: &str, provenance: &Provenance, view: &str) -> String {
    embed_svg_provenance_with(svg, provenance, view, &[])
}

/// [`embed_svg_provenance`] with further key/value pairs as attributes of the `provenance`
/// element, after `disk_hash` and in the order given (e.g. the Monte Carlo's `seed` and
/// `samples`). Keys must be XML names; values are escaped.
pub fn embed_svg_provenance_with(
    svg: &str,
    provenance: &Provenance,
    view: &str,
    extra: &[(&str, String)],
) -> String {
    let Some(start) = svg.find("<svg") else {
        return svg.to_string();
    };
    let Some(end) = svg[start..].find('>') else {
        return svg.to_string();
    };
    let at = start + end + 1;
    let attributes: String = extra
        .iter()
        .map(|(k, v)| format!(" {k}=\"{}\"", xml_escape(v)))
        .collect();
    let metadata = format!(
        "\n<metadata><provenance xmlns=\"urn:nivalis:provenance\" program=\"{}\" view=\"{}\" disk_hash=\"{}\"{attributes}>{}</provenance></metadata>",
        xml_escape(&provenance.program),
        xml_escape(view),
        xml_escape(&provenance.disk_hash),
        xml_escape(&provenance.disk_value().to_string())
    );
    format!("{}{}{}", &svg[..at], metadata, &svg[at..])
}

/// The pairs a figure of a Monte Carlo (docs/model.md section 13) carries besides the disk:
/// its seed and sample count, for [`embed_svg_provenance_with`] / [`embed_png_provenance_with`].
/// The CLI (`nivalis uncertainty --figure`, `nivalis fit --uncertainty --figure`) and the page
/// both take them from here.
pub fn monte_carlo_provenance(seed: u64, samples: usize) -> [(&'static str, String); 2] {
    [("seed", seed.to_string()), ("samples", samples.to_string())]
}

/// CRC-32 (ISO 3309, as PNG uses) of `bytes`.
fn crc32(bytes: &[u8]) -> u32 {
    let mut crc = 0xffff_ffffu32;
    for &b in bytes {
        crc ^= u32::from(b);
        for _ in 0..8 {
            crc = if crc & 1 != 0 {
                0xedb8_8320 ^ (crc >> 1)
            } else {
                crc >> 1
            };
        }
    }
    !crc
}

fn chunk(kind: &[u8; 4], data: &[u8]) -> Vec<u8> {
    let mut out = Vec::with_capacity(data.len() + 12);
    out.extend_from_slice(&(data.len() as u32).to_be_bytes());
    let mut typed = Vec::with_capacity(data.len() + 4);
    typed.extend_from_slice(kind);
    typed.extend_from_slice(data);
    out.extend_from_slice(&typed);
    out.extend_from_slice(&crc32(&typed).to_be_bytes());
    out
}

/// An uncompressed international text chunk (iTXt, UTF-8).
fn itxt(keyword: &str, text: &str) -> Vec<u8> {
    let mut data = Vec::new();
    data.extend_from_slice(keyword.as_bytes());
    data.extend_from_slice(&[0, 0, 0, 0, 0]); // keyword end, no compression, method 0, empty language, empty translated keyword
    data.extend_from_slice(text.as_bytes());
    chunk(b"iTXt", &data)
}

/// Insert text chunks (Software, nivalis view, disk hash, disk file) before IEND.
/// Returns the input unchanged if it is not a PNG.
pub fn embed_png_provenance(png: &[u8], provenance: &Provenance, view: &str) -> Vec<u8> {
    embed_png_provenance_with(png, provenance, view, &[])
}

/// [`embed_png_provenance`] with one more text chunk `nivalis:KEY` per key/value pair, after
/// the disk hash and in the order given (e.g. the Monte Carlo's `seed` and `samples`).
pub fn embed_png_provenance_with(
    png: &[u8],
    provenance: &Provenance,
    view: &str,
    extra: &[(&str, String)],
) -> Vec<u8> {
    const SIGNATURE: [u8; 8] = [0x89, b'P', b'N', b'G', 0x0d, 0x0a, 0x1a, 0x0a];
    if png.len() < 20 || png[..8] != SIGNATURE || &png[png.len() - 8..png.len() - 4] != b"IEND" {
        return png.to_vec();
    }
    let iend = png.len() - 12;
    let mut out = png[..iend].to_vec();
    out.extend(itxt("Software", &provenance.program));
    out.extend(itxt("nivalis:view", view));
    out.extend(itxt("nivalis:disk_hash", &provenance.disk_hash));
    for (k, v) in extra {
        out.extend(itxt(&format!("nivalis:{k}"), v));
    }
    out.extend(itxt(
        "nivalis:disk_file",
        &provenance.disk_value().to_string(),
    ));
    out.extend_from_slice(&png[iend..]);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn crc_matches_the_png_specification_example() {
        // The IEND chunk of every PNG ends in the CRC ae 42 60 82 (PNG specification, ISO/IEC 15948).
        assert_eq!(crc32(b"IEND"), 0xae42_6082);
    }

    #[test]
    fn svg_metadata_goes_after_the_root_tag() {
        let p = Provenance::of(&nivalis_disk_files::DiskFile::defaults());
        let svg = embed_svg_provenance(
            "<?xml version=\"1.0\"?><svg width=\"1\"><rect/></svg>",
            &p,
            "c_to_o",
        );
        assert!(svg.starts_with("<?xml version=\"1.0\"?><svg width=\"1\">\n<metadata><provenance"));
        assert!(svg.ends_with("</metadata><rect/></svg>"));
        // Without extra pairs the element is exactly the plain one; with them, attributes.
        let plain = embed_svg_provenance_with("<svg width=\"1\"></svg>", &p, "c_to_o", &[]);
        assert_eq!(
            plain,
            embed_svg_provenance("<svg width=\"1\"></svg>", &p, "c_to_o")
        );
        let with = embed_svg_provenance_with(
            "<svg width=\"1\"></svg>",
            &p,
            "bands:c_to_o_gas",
            &[("seed", "5".into()), ("samples", "60".into())],
        );
        assert!(with.contains("\" seed=\"5\" samples=\"60\">"), "{with}");
    }

    #[test]
    fn png_extra_pairs_are_text_chunks_before_iend() {
        // The smallest PNG frame: signature, then an IEND chunk (length 0, "IEND", CRC ae426082,
        // PNG specification); what is between does not matter to the embedding.
        let mut png = vec![0x89, b'P', b'N', b'G', 0x0d, 0x0a, 0x1a, 0x0a];
        png.extend_from_slice(&[0; 12]);
        png.extend_from_slice(&[0, 0, 0, 0, b'I', b'E', b'N', b'D', 0xae, 0x42, 0x60, 0x82]);
        let p = Provenance::of(&nivalis_disk_files::DiskFile::defaults());
        let out = embed_png_provenance_with(&png, &p, "posterior", &[("seed", "7".into())]);
        let text = String::from_utf8_lossy(&out);
        let seed = text.find("nivalis:seed\0\0\0\0\x007").expect("seed chunk");
        assert!(text.find("nivalis:disk_hash").unwrap() < seed);
        assert!(out.ends_with(&[0, 0, 0, 0, b'I', b'E', b'N', b'D', 0xae, 0x42, 0x60, 0x82]));
    }
}
