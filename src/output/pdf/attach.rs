//! File attachments: embeds files in a finished PDF through the catalog's `/Names`
//! `/EmbeddedFiles` name tree (ISO 32000-1 §7.11.4, §7.7.4), lists them and extracts them again.
//! Works on bytes with lopdf after rendering; writes no dates, so output stays reproducible.

use lopdf::{Dictionary, Document, Object, ObjectId, Stream, StringFormat};
use sha2::{Digest, Sha256};

use super::PdfError;
use super::content::Attachment;
use super::render::pdf_text;

fn lo(e: lopdf::Error) -> PdfError {
    PdfError::Pdf(e.to_string())
}

/// PDF name for a MIME type: `/` and other delimiters become `#xx` escapes when written;
/// lopdf escapes them, so the name is the MIME string itself.
fn mime_name(mime: &str) -> Object {
    let m = if mime.is_empty() {
        "application/octet-stream"
    } else {
        mime
    };
    Object::Name(m.as_bytes().to_vec())
}

/// Decodes a PDF text string (UTF-16BE with BOM, else PDFDocEncoding read as Latin-1).
fn decode_text(b: &[u8]) -> String {
    if b.len() >= 2 && b[0] == 0xFE && b[1] == 0xFF {
        let units: Vec<u16> = b[2..]
            .chunks(2)
            .map(|c| u16::from_be_bytes([c[0], *c.get(1).unwrap_or(&0)]))
            .collect();
        String::from_utf16_lossy(&units)
    } else {
        b.iter().map(|&c| c as char).collect()
    }
}

/// Collects (name, filespec object) pairs of a name tree node, depth-first (kids in order).
fn walk_names(doc: &Document, node: &Dictionary, out: &mut Vec<(String, Object)>, depth: usize) {
    if depth > 32 {
        return;
    }
    if let Ok(Object::Array(names)) = node.get_deref(b"Names", doc) {
        for pair in names.chunks(2) {
            if let [key, value] = pair {
                let key = match doc.dereference(key) {
                    Ok((_, Object::String(s, _))) => decode_text(s),
                    _ => continue,
                };
                out.push((key, value.clone()));
            }
        }
    }
    if let Ok(Object::Array(kids)) = node.get_deref(b"Kids", doc) {
        for kid in kids {
            if let Ok((_, Object::Dictionary(d))) = doc.dereference(kid) {
                walk_names(doc, d, out, depth + 1);
            }
        }
    }
}

fn embedded_files(doc: &Document) -> Result<Vec<(String, Object)>, PdfError> {
    let catalog = doc.catalog().map_err(lo)?;
    let mut out = Vec::new();
    if let Ok(Object::Dictionary(names)) = catalog.get_deref(b"Names", doc)
        && let Ok(Object::Dictionary(ef)) = names.get_deref(b"EmbeddedFiles", doc)
    {
        walk_names(doc, ef, &mut out, 0);
    }
    Ok(out)
}

/// Embeds `files` in `pdf` (name tree sorted by file name, replacing same-named entries) and
/// returns the new bytes. Each file gets a `/Filespec` with `/F`, `/UF`, `/Desc` and an
/// `/EmbeddedFile` stream with `/Subtype` (the MIME type) and `/Params << /Size n >>`, Flate-
/// compressed. The second document id becomes a SHA-256 of the attachments, so it changes
/// exactly when they do. No dates are written.
pub fn attach_files(pdf: Vec<u8>, files: &[Attachment]) -> Result<Vec<u8>, PdfError> {
    if files.is_empty() {
        return Ok(pdf);
    }
    for (i, f) in files.iter().enumerate() {
        if f.name.is_empty() {
            return Err(PdfError::Attachment(
                "an attachment has an empty file name; give every attachment a name".into(),
            ));
        }
        if files[..i].iter().any(|g| g.name == f.name) {
            return Err(PdfError::Attachment(format!(
                "two attachments are both named {:?}; give each a distinct name",
                f.name
            )));
        }
    }
    let mut doc = Document::load_mem(&pdf).map_err(lo)?;
    let mut entries: Vec<(String, Object)> = embedded_files(&doc)?
        .into_iter()
        .filter(|(n, _)| !files.iter().any(|f| &f.name == n))
        .collect();
    let mut h = Sha256::new();
    for f in files {
        h.update((f.name.len() as u64).to_be_bytes());
        h.update(f.name.as_bytes());
        h.update((f.bytes.len() as u64).to_be_bytes());
        h.update(&f.bytes);

        let mut params = Dictionary::new();
        params.set("Size", Object::Integer(f.bytes.len() as i64));
        let mut sd = Dictionary::new();
        sd.set("Type", Object::Name(b"EmbeddedFile".to_vec()));
        sd.set("Subtype", mime_name(&f.mime));
        sd.set("Params", Object::Dictionary(params));
        let mut stream = Stream::new(sd, f.bytes.clone());
        // Best effort: a stream that does not shrink is stored uncompressed.
        let _ = stream.compress();
        let stream_id: ObjectId = doc.add_object(Object::Stream(stream));

        let mut ef = Dictionary::new();
        ef.set("F", Object::Reference(stream_id));
        ef.set("UF", Object::Reference(stream_id));
        let mut spec = Dictionary::new();
        spec.set("Type", Object::Name(b"Filespec".to_vec()));
        spec.set("F", pdf_text(&f.name));
        spec.set("UF", pdf_text(&f.name));
        if !f.description.is_empty() {
            spec.set("Desc", pdf_text(&f.description));
        }
        spec.set("AFRelationship", Object::Name(b"Source".to_vec()));
        spec.set("EF", Object::Dictionary(ef));
        let spec_id = doc.add_object(Object::Dictionary(spec));
        entries.push((f.name.clone(), Object::Reference(spec_id)));
    }
    // Name tree keys must be in ascending byte order of their string encoding.
    entries.sort_by(|a, b| {
        let ka = key_bytes(&a.0);
        let kb = key_bytes(&b.0);
        ka.cmp(&kb)
    });
    let names_array: Vec<Object> = entries
        .iter()
        .flat_map(|(n, v)| [pdf_text(n), v.clone()])
        .collect();
    let mut ef_tree = Dictionary::new();
    ef_tree.set("Names", Object::Array(names_array));
    let ef_tree_id = doc.add_object(Object::Dictionary(ef_tree));

    let mut names_dict = match doc.catalog().map_err(lo)?.get_deref(b"Names", &doc) {
        Ok(Object::Dictionary(d)) => d.clone(),
        _ => Dictionary::new(),
    };
    names_dict.set("EmbeddedFiles", Object::Reference(ef_tree_id));
    let af: Vec<Object> = entries.iter().map(|(_, v)| v.clone()).collect();
    {
        let catalog = doc.catalog_mut().map_err(lo)?;
        catalog.set("Names", Object::Dictionary(names_dict));
        catalog.set("AF", Object::Array(af));
    }

    let digest = h.finalize();
    let first = match doc.trailer.get(b"ID") {
        Ok(Object::Array(a)) if !a.is_empty() => a[0].clone(),
        _ => Object::String(digest[16..].to_vec(), StringFormat::Hexadecimal),
    };
    doc.trailer.set(
        "ID",
        Object::Array(vec![
            first,
            Object::String(digest[..16].to_vec(), StringFormat::Hexadecimal),
        ]),
    );
    doc.prune_objects();
    doc.renumber_objects();
    let mut out = Vec::new();
    doc.save_to(&mut out)
        .map_err(|e| PdfError::Pdf(format!("writing PDF failed: {e}")))?;
    Ok(out)
}

fn key_bytes(name: &str) -> Vec<u8> {
    match pdf_text(name) {
        Object::String(b, _) => b,
        _ => Vec::new(),
    }
}

/// Names of the files embedded in `pdf`, in name-tree order.
pub fn list_attachments(pdf: &[u8]) -> Result<Vec<String>, PdfError> {
    let doc = Document::load_mem(pdf).map_err(lo)?;
    Ok(embedded_files(&doc)?.into_iter().map(|(n, _)| n).collect())
}

/// The bytes of the embedded file called `name`, `None` when there is none of that name.
pub fn extract_attachment(pdf: &[u8], name: &str) -> Result<Option<Vec<u8>>, PdfError> {
    let doc = Document::load_mem(pdf).map_err(lo)?;
    for (n, spec) in embedded_files(&doc)? {
        if n != name {
            continue;
        }
        let (_, spec) = doc.dereference(&spec).map_err(lo)?;
        let spec = spec.as_dict().map_err(lo)?;
        let ef = spec
            .get_deref(b"EF", &doc)
            .and_then(Object::as_dict)
            .map_err(lo)?;
        let file = ef
            .get_deref(b"UF", &doc)
            .or_else(|_| ef.get_deref(b"F", &doc))
            .and_then(Object::as_stream)
            .map_err(lo)?;
        let bytes = if file.dict.has(b"Filter") {
            file.decompressed_content().map_err(lo)?
        } else {
            file.content.clone()
        };
        return Ok(Some(bytes));
    }
    Ok(None)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn utf16_names_decode() {
        let Object::String(b, _) = pdf_text("Ñdógo.yaml") else {
            panic!()
        };
        assert_eq!(decode_text(&b), "Ñdógo.yaml");
        assert_eq!(decode_text(b"plain.yaml"), "plain.yaml");
    }
}
