//! `word/styles.xml`: every paragraph, character and table style the body
//! names, with readable names, so that restyling the report in a word
//! processor (all captions, all table notes, every report table) is one
//! change to one style. Built-in styles keep their built-in ids
//! (`Heading1`, `Title`, `Caption`, `Hyperlink`…).

/// Body text size in half-points (11 pt), and the size in tables (9 pt).
const BODY_SIZE: u32 = 22;
pub(super) const TABLE_SIZE: u32 = 18;

const SERIF: &str = "Cambria";
const SANS: &str = "Calibri";
const MONO: &str = "Consolas";

fn fonts(name: &str) -> String {
    format!(r#"<w:rFonts w:ascii="{name}" w:hAnsi="{name}" w:eastAsia="{name}" w:cs="{name}"/>"#)
}

/// A paragraph style: id, name, what it is based on, paragraph and run
/// properties (already in schema order).
fn paragraph_style(id: &str, name: &str, based_on: &str, ppr: &str, rpr: &str) -> String {
    let based = if based_on.is_empty() {
        String::new()
    } else {
        format!(r#"<w:basedOn w:val="{based_on}"/>"#)
    };
    let kind = if id == "Normal" {
        r#" w:default="1""#
    } else if BUILT_IN.contains(&id) {
        ""
    } else {
        r#" w:customStyle="1""#
    };
    format!(
        r#"<w:style w:type="paragraph"{kind} w:styleId="{id}"><w:name w:val="{name}"/>{based}<w:qFormat/><w:pPr>{ppr}</w:pPr><w:rPr>{rpr}</w:rPr></w:style>
"#
    )
}

/// Style ids that word processors know by themselves.
const BUILT_IN: [&str; 15] = [
    "Normal",
    "Title",
    "Subtitle",
    "Heading1",
    "Heading2",
    "Heading3",
    "Heading4",
    "Caption",
    "Quote",
    "ListParagraph",
    "Footer",
    "TOCHeading",
    "TOC1",
    "TOC2",
    "TableofFigures",
];

fn heading(level: u32, size: u32, before: u32) -> String {
    paragraph_style(
        &format!("Heading{level}"),
        &format!("heading {level}"),
        "Normal",
        &format!(
            r#"<w:keepNext/><w:keepLines/><w:spacing w:before="{before}" w:after="80"/><w:outlineLvl w:val="{}"/>"#,
            level - 1
        ),
        &format!(
            r#"{}<w:b/><w:color w:val="1F3864"/><w:sz w:val="{size}"/><w:szCs w:val="{size}"/>"#,
            fonts(SANS)
        ),
    )
}

/// The paragraph styles.
fn paragraph_styles() -> String {
    let small = format!(r#"<w:sz w:val="{TABLE_SIZE}"/><w:szCs w:val="{TABLE_SIZE}"/>"#);
    let mut out = String::new();
    out.push_str(&paragraph_style(
        "Normal",
        "Normal",
        "",
        r#"<w:spacing w:after="120" w:line="264" w:lineRule="auto"/>"#,
        "",
    ));
    out.push_str(&paragraph_style(
        "Title",
        "Title",
        "Normal",
        r#"<w:spacing w:before="0" w:after="120"/><w:jc w:val="center"/>"#,
        &format!(
            r#"{}<w:b/><w:sz w:val="40"/><w:szCs w:val="40"/>"#,
            fonts(SANS)
        ),
    ));
    out.push_str(&paragraph_style(
        "Subtitle",
        "Subtitle",
        "Normal",
        r#"<w:spacing w:after="60"/><w:jc w:val="center"/>"#,
        r#"<w:sz w:val="24"/><w:szCs w:val="24"/>"#,
    ));
    for (level, size, before) in [(1, 30, 360), (2, 26, 240), (3, 24, 200), (4, 22, 160)] {
        out.push_str(&heading(level, size, before));
    }
    for (id, name, based, ppr, run) in STYLES {
        out.push_str(&paragraph_style(
            id,
            name,
            based,
            ppr,
            &run.properties(&small),
        ));
    }
    out
}

/// What a style adds to its runs: nothing, the table type size, italics,
/// bold, or the monospaced face.
#[derive(Clone, Copy)]
enum Run {
    Plain,
    Small,
    Italic,
    ItalicSmall,
    Bold,
    MonoSmall,
}

impl Run {
    /// The run properties (`small` is the table type size).
    fn properties(self, small: &str) -> String {
        match self {
            Run::Plain => String::new(),
            Run::Small => small.to_string(),
            Run::Italic => "<w:i/>".to_string(),
            Run::ItalicSmall => format!("<w:i/>{small}"),
            Run::Bold => "<w:b/>".to_string(),
            Run::MonoSmall => format!("{}{small}", fonts(MONO)),
        }
    }
}

/// The styles after the headings, each with its id, name, parent,
/// paragraph properties and run: captions, table text and notes, then
/// lists, quotes, code, the title block's lines, the footer and contents.
/// (One line a style, as a table reads.)
#[rustfmt::skip]
const STYLES: [(&str, &str, &str, &str, Run); 17] = [
    ("Caption", "caption", "Normal", r#"<w:spacing w:before="120" w:after="120"/>"#, Run::ItalicSmall),
    ("TableCaption", "Table caption", "Caption", r#"<w:keepNext/><w:spacing w:before="240" w:after="80"/>"#, Run::Plain),
    ("FigureCaption", "Figure caption", "Caption", r#"<w:spacing w:before="60" w:after="240"/>"#, Run::Plain),
    ("Figure", "Figure", "Normal", r#"<w:keepNext/><w:spacing w:before="240" w:after="0"/><w:jc w:val="center"/>"#, Run::Plain),
    ("TableNote", "Table note", "Normal", r#"<w:spacing w:before="40" w:after="40" w:line="240" w:lineRule="auto"/>"#, Run::Small),
    ("TableText", "Table text", "Normal", r#"<w:spacing w:before="20" w:after="20" w:line="240" w:lineRule="auto"/>"#, Run::Small),
    ("TableHeading", "Table heading", "TableText", "<w:keepNext/>", Run::Bold),
    ("ListParagraph", "List Paragraph", "Normal", r#"<w:spacing w:after="60"/><w:ind w:left="720"/><w:contextualSpacing/>"#, Run::Plain),
    ("Quote", "Quote", "Normal", r#"<w:ind w:left="567" w:right="567"/>"#, Run::Italic),
    ("CodeBlock", "Code block", "Normal", r#"<w:spacing w:after="0" w:line="240" w:lineRule="auto"/><w:ind w:left="284"/>"#, Run::MonoSmall),
    ("Author", "Author", "Subtitle", "", Run::Plain),
    ("Date", "Date", "Subtitle", r#"<w:spacing w:after="360"/>"#, Run::Plain),
    ("Footer", "footer", "Normal", r#"<w:spacing w:after="0"/><w:jc w:val="center"/>"#, Run::Small),
    ("TOC1", "toc 1", "Normal", r#"<w:spacing w:after="60"/>"#, Run::Plain),
    ("TOC2", "toc 2", "Normal", r#"<w:spacing w:after="60"/><w:ind w:left="220"/>"#, Run::Plain),
    ("TableofFigures", "table of figures", "Normal", r#"<w:spacing w:after="60"/>"#, Run::Plain),
    ("TOCHeading", "TOC Heading", "Heading1", r#"<w:outlineLvl w:val="9"/>"#, Run::Plain),
];

/// The character styles: inline code and links.
fn character_styles() -> String {
    format!(
        r#"<w:style w:type="character" w:default="1" w:styleId="DefaultParagraphFont"><w:name w:val="Default Paragraph Font"/><w:uiPriority w:val="1"/><w:semiHidden/></w:style>
<w:style w:type="character" w:customStyle="1" w:styleId="CodeChar"><w:name w:val="Code"/><w:basedOn w:val="DefaultParagraphFont"/><w:qFormat/><w:rPr>{}</w:rPr></w:style>
<w:style w:type="character" w:styleId="Hyperlink"><w:name w:val="Hyperlink"/><w:basedOn w:val="DefaultParagraphFont"/><w:rPr><w:color w:val="0563C1"/><w:u w:val="single"/></w:rPr></w:style>
"#,
        fonts(MONO)
    )
}

/// The table style every table uses: rules above and below the table and
/// under the header row, no vertical lines, small type.
fn table_style() -> String {
    let rule = |side: &str, size: u32| {
        format!(r#"<w:{side} w:val="single" w:sz="{size}" w:space="0" w:color="000000"/>"#)
    };
    format!(
        r#"<w:style w:type="table" w:default="1" w:styleId="TableNormal"><w:name w:val="Normal Table"/><w:uiPriority w:val="99"/><w:semiHidden/><w:tblPr><w:tblInd w:w="0" w:type="dxa"/><w:tblCellMar><w:top w:w="0" w:type="dxa"/><w:left w:w="108" w:type="dxa"/><w:bottom w:w="0" w:type="dxa"/><w:right w:w="108" w:type="dxa"/></w:tblCellMar></w:tblPr></w:style>
<w:style w:type="table" w:customStyle="1" w:styleId="ReportTable"><w:name w:val="Report table"/><w:basedOn w:val="TableNormal"/><w:qFormat/><w:pPr><w:spacing w:after="0"/></w:pPr><w:rPr><w:sz w:val="{TABLE_SIZE}"/><w:szCs w:val="{TABLE_SIZE}"/></w:rPr><w:tblPr><w:tblBorders>{}{}</w:tblBorders><w:tblCellMar><w:left w:w="85" w:type="dxa"/><w:right w:w="85" w:type="dxa"/></w:tblCellMar></w:tblPr><w:tblStylePr w:type="firstRow"><w:rPr><w:b/></w:rPr><w:tcPr><w:tcBorders>{}</w:tcBorders></w:tcPr></w:tblStylePr></w:style>
"#,
        rule("top", 12),
        rule("bottom", 12),
        rule("bottom", 6)
    )
}

/// The whole styles part.
pub(super) fn styles_xml() -> String {
    format!(
        r#"<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<w:styles xmlns:w="http://schemas.openxmlformats.org/wordprocessingml/2006/main">
<w:docDefaults><w:rPrDefault><w:rPr>{}<w:sz w:val="{BODY_SIZE}"/><w:szCs w:val="{BODY_SIZE}"/></w:rPr></w:rPrDefault><w:pPrDefault><w:pPr><w:spacing w:after="120"/></w:pPr></w:pPrDefault></w:docDefaults>
{}{}{}</w:styles>
"#,
        fonts(SERIF),
        paragraph_styles(),
        character_styles(),
        table_style()
    )
}

/// `word/fontTable.xml`: the kind of each face the styles name, so that a
/// word processor without it substitutes one of the same kind (above all a
/// monospaced face for code).
pub(super) fn fonts_xml() -> String {
    let mut out = String::from(
        "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<w:fonts xmlns:w=\"http://schemas.openxmlformats.org/wordprocessingml/2006/main\">\n",
    );
    for (name, family, pitch) in [
        (SERIF, "roman", "variable"),
        (SANS, "swiss", "variable"),
        (MONO, "modern", "fixed"),
    ] {
        out.push_str(&format!(
            "<w:font w:name=\"{name}\"><w:family w:val=\"{family}\"/><w:pitch w:val=\"{pitch}\"/></w:font>\n"
        ));
    }
    out.push_str("</w:fonts>\n");
    out
}
