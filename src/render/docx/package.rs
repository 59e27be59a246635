//! The package (ECMA-376 Part 2, Open Packaging Conventions): the zip
//! archive with its parts in a fixed order, every entry dated 1980-01-01
//! (the earliest date a zip entry holds), the content types and the
//! relationships, whose ids are given in document order.

use crate::escape::ooxml_escape;
use std::io::{Cursor, Read, Write};
use zip::write::SimpleFileOptions;
use zip::{CompressionMethod, DateTime, ZipArchive, ZipWriter};

const RELATIONSHIPS: &str = "http://schemas.openxmlformats.org/officeDocument/2006/relationships";
const PACKAGE_RELATIONSHIPS: &str = "http://schemas.openxmlformats.org/package/2006/relationships";

/// Relationships of the document part that are always there, with their
/// ids: the parts `parts` writes.
const FIXED: [(&str, &str, &str); 5] = [
    ("rId1", "styles", "styles.xml"),
    ("rId2", "numbering", "numbering.xml"),
    ("rId3", "settings", "settings.xml"),
    ("rId4", "footer", "footer1.xml"),
    ("rId5", "fontTable", "fontTable.xml"),
];

/// The footer's relationship id, for the section properties.
pub(super) const FOOTER_ID: &str = "rId4";

/// A relationship the body adds: a link or an image.
struct Relation {
    kind: &'static str,
    target: String,
    external: bool,
}

/// What the body refers to outside itself: hyperlinks and media, each with
/// the id the body names it by.
#[derive(Default)]
pub(super) struct Relations {
    added: Vec<Relation>,
    /// Media files under `word/media/`: name and bytes.
    media: Vec<(String, Vec<u8>)>,
}

impl Relations {
    fn id(&self, k: usize) -> String {
        format!("rId{}", FIXED.len() + 1 + k)
    }

    /// The id of a hyperlink to `url` (one relationship per address).
    pub(super) fn hyperlink(&mut self, url: &str) -> String {
        let found = self
            .added
            .iter()
            .position(|r| r.kind == "hyperlink" && r.target == url);
        let k = found.unwrap_or_else(|| {
            self.added.push(Relation {
                kind: "hyperlink",
                target: url.to_string(),
                external: true,
            });
            self.added.len() - 1
        });
        self.id(k)
    }

    /// The id of a media file stored as `word/media/<name>`.
    pub(super) fn image(&mut self, name: &str, bytes: Vec<u8>) -> String {
        self.added.push(Relation {
            kind: "image",
            target: format!("media/{name}"),
            external: false,
        });
        self.media.push((name.to_string(), bytes));
        self.id(self.added.len() - 1)
    }

    /// `word/_rels/document.xml.rels`.
    fn xml(&self) -> String {
        let mut out = format!(
            "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<Relationships xmlns=\"{PACKAGE_RELATIONSHIPS}\">\n"
        );
        let fixed = FIXED
            .iter()
            .map(|(id, kind, target)| (id.to_string(), *kind, target.to_string(), false));
        let added = self
            .added
            .iter()
            .enumerate()
            .map(|(k, r)| (self.id(k), r.kind, r.target.clone(), r.external));
        for (id, kind, target, external) in fixed.chain(added) {
            out.push_str(&format!(
                "<Relationship Id=\"{id}\" Type=\"{RELATIONSHIPS}/{kind}\" Target=\"{}\"{}/>\n",
                ooxml_escape(&target),
                if external {
                    " TargetMode=\"External\""
                } else {
                    ""
                }
            ));
        }
        out.push_str("</Relationships>\n");
        out
    }
}

/// The parts of the document written elsewhere.
pub(super) struct Parts {
    pub(super) document: String,
    pub(super) styles: String,
    pub(super) numbering: String,
    pub(super) settings: String,
    pub(super) footer: String,
    pub(super) fonts: String,
    pub(super) core: String,
    pub(super) app: String,
}

/// `[Content_Types].xml`: the XML parts by name, media by extension.
fn content_types(media: &[(String, Vec<u8>)]) -> String {
    let main = "application/vnd.openxmlformats-officedocument.wordprocessingml";
    let mut out = String::from(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<Types xmlns=\"http://schemas.openxmlformats.org/package/2006/content-types\">\n<Default Extension=\"rels\" ContentType=\"application/vnd.openxmlformats-package.relationships+xml\"/>\n<Default Extension=\"xml\" ContentType=\"application/xml\"/>\n",
    );
    for (extension, kind) in [("png", "image/png"), ("svg", "image/svg+xml")] {
        if media
            .iter()
            .any(|(n, _)| n.ends_with(&format!(".{extension}")))
        {
            out.push_str(&format!(
                "<Default Extension=\"{extension}\" ContentType=\"{kind}\"/>\n"
            ));
        }
    }
    for (part, kind) in [
        ("/word/document.xml", format!("{main}.document.main+xml")),
        ("/word/styles.xml", format!("{main}.styles+xml")),
        ("/word/numbering.xml", format!("{main}.numbering+xml")),
        ("/word/settings.xml", format!("{main}.settings+xml")),
        ("/word/footer1.xml", format!("{main}.footer+xml")),
        ("/word/fontTable.xml", format!("{main}.fontTable+xml")),
        (
            "/docProps/core.xml",
            "application/vnd.openxmlformats-package.core-properties+xml".to_string(),
        ),
        (
            "/docProps/app.xml",
            "application/vnd.openxmlformats-officedocument.extended-properties+xml".to_string(),
        ),
    ] {
        out.push_str(&format!(
            "<Override PartName=\"{part}\" ContentType=\"{kind}\"/>\n"
        ));
    }
    out.push_str("</Types>\n");
    out
}

/// `_rels/.rels`: the package's main document and its properties.
fn package_relations() -> String {
    format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<Relationships xmlns=\"{PACKAGE_RELATIONSHIPS}\">\n<Relationship Id=\"rId1\" Type=\"{RELATIONSHIPS}/officeDocument\" Target=\"word/document.xml\"/>\n<Relationship Id=\"rId2\" Type=\"{PACKAGE_RELATIONSHIPS}/metadata/core-properties\" Target=\"docProps/core.xml\"/>\n<Relationship Id=\"rId3\" Type=\"{RELATIONSHIPS}/extended-properties\" Target=\"docProps/app.xml\"/>\n</Relationships>\n"
    )
}

/// The archive: content types first (as readers expect), then the package
/// relationships, the document and its parts, the media, the properties.
pub(super) fn archive(parts: Parts, relations: Relations) -> Result<Vec<u8>, String> {
    let mut entries: Vec<(String, Vec<u8>)> = vec![
        (
            "[Content_Types].xml".into(),
            content_types(&relations.media).into_bytes(),
        ),
        ("_rels/.rels".into(), package_relations().into_bytes()),
        ("word/document.xml".into(), parts.document.into_bytes()),
        (
            "word/_rels/document.xml.rels".into(),
            relations.xml().into_bytes(),
        ),
        ("word/styles.xml".into(), parts.styles.into_bytes()),
        ("word/numbering.xml".into(), parts.numbering.into_bytes()),
        ("word/settings.xml".into(), parts.settings.into_bytes()),
        ("word/footer1.xml".into(), parts.footer.into_bytes()),
        ("word/fontTable.xml".into(), parts.fonts.into_bytes()),
    ];
    entries.extend(
        relations
            .media
            .into_iter()
            .map(|(name, bytes)| (format!("word/media/{name}"), bytes)),
    );
    entries.push(("docProps/core.xml".into(), parts.core.into_bytes()));
    entries.push(("docProps/app.xml".into(), parts.app.into_bytes()));
    zip_entries(&entries).map_err(|e| format!("cannot write the docx archive: {e}"))
}

fn zip_entries(entries: &[(String, Vec<u8>)]) -> zip::result::ZipResult<Vec<u8>> {
    let options = SimpleFileOptions::default()
        .compression_method(CompressionMethod::Deflated)
        .compression_level(Some(6))
        .last_modified_time(DateTime::default())
        .unix_permissions(0o644);
    let mut zip = ZipWriter::new(Cursor::new(Vec::new()));
    for (name, bytes) in entries {
        // PNG data is compressed already.
        let options = if name.ends_with(".png") {
            options
                .compression_method(CompressionMethod::Stored)
                .compression_level(None)
        } else {
            options
        };
        zip.start_file(name.as_str(), options)?;
        zip.write_all(bytes)?;
    }
    Ok(zip.finish()?.into_inner())
}

/// The most a part may unpack to (far above any report's), so that a
/// damaged or hostile archive on disk cannot exhaust memory.
const MAX_PART: u64 = 1 << 30;

/// The entries of a docx, in archive order: what `verify` compares.
pub(super) fn unpack(bytes: &[u8]) -> Result<Vec<(String, Vec<u8>)>, String> {
    let mut archive =
        ZipArchive::new(Cursor::new(bytes)).map_err(|e| format!("not a readable archive: {e}"))?;
    let mut entries = Vec::with_capacity(archive.len());
    for i in 0..archive.len() {
        let mut entry = archive
            .by_index(i)
            .map_err(|e| format!("entry {i} cannot be read: {e}"))?;
        let name = entry.name().to_string();
        let mut data = Vec::new();
        (&mut entry)
            .take(MAX_PART + 1)
            .read_to_end(&mut data)
            .map_err(|e| format!("{name} cannot be read: {e}"))?;
        if data.len() as u64 > MAX_PART {
            return Err(format!("{name} unpacks to more than {MAX_PART} bytes"));
        }
        entries.push((name, data));
    }
    Ok(entries)
}
