//! PDF documents in a folder store, made here by two independent writers: the `lopdf`
//! crate (content streams written by hand, so the layout is exactly known) and, where it
//! is installed, Ghostscript's `pdfwrite` from PostScript. Each set has a page in two
//! columns, a second page, and a file with no text layer (an image only).

use std::path::Path;
use std::process::Command;

use lopdf::content::{Content, Operation};
use lopdf::{Document, Object, Stream, dictionary};
use serde_json::json;

use super::{check, have_tool, write_jsonl};

/// Lines of a page: (x, y, text), in the order the content stream draws them.
type Lines<'a> = &'a [(i64, i64, &'a str)];

/// A PDF with Helvetica text on each page; a page given as `None` draws an image only.
fn lopdf_pdf(path: &Path, pages: &[Option<Lines<'_>>]) {
    let mut doc = Document::with_version("1.5");
    let pages_id = doc.new_object_id();
    let font = doc.add_object(dictionary! {
        "Type" => "Font", "Subtype" => "Type1", "BaseFont" => "Helvetica", "Encoding" => "WinAnsiEncoding",
    });
    // An 8×8 grey image.
    let image = doc.add_object(Stream::new(
        dictionary! {
            "Type" => "XObject", "Subtype" => "Image", "Width" => 8, "Height" => 8,
            "ColorSpace" => "DeviceGray", "BitsPerComponent" => 8,
        },
        (0..64u8).map(|i| i.wrapping_mul(4)).collect(),
    ));
    let resources = doc.add_object(dictionary! {
        "Font" => dictionary! {"F1" => font},
        "XObject" => dictionary! {"Im1" => image},
    });
    let mut kids = Vec::new();
    for page in pages {
        let operations = match page {
            Some(lines) => {
                let mut ops = vec![
                    Operation::new("BT", vec![]),
                    Operation::new("Tf", vec!["F1".into(), 11.into()]),
                ];
                for (x, y, text) in *lines {
                    ops.push(Operation::new(
                        "Tm",
                        vec![1.into(), 0.into(), 0.into(), 1.into(), (*x).into(), (*y).into()],
                    ));
                    ops.push(Operation::new("Tj", vec![Object::string_literal(*text)]));
                }
                ops.push(Operation::new("ET", vec![]));
                ops
            }
            None => vec![
                Operation::new("q", vec![]),
                Operation::new(
                    "cm",
                    vec![200.into(), 0.into(), 0.into(), 200.into(), 72.into(), 500.into()],
                ),
                Operation::new("Do", vec!["Im1".into()]),
                Operation::new("Q", vec![]),
            ],
        };
        let content = Content { operations }.encode().expect("encode content");
        let content_id = doc.add_object(Stream::new(dictionary! {}, content));
        let page_id = doc.add_object(dictionary! {
            "Type" => "Page", "Parent" => pages_id, "Contents" => content_id,
        });
        kids.push(page_id.into());
    }
    let count = kids.len() as i64;
    doc.objects.insert(
        pages_id,
        Object::Dictionary(dictionary! {
            "Type" => "Pages", "Kids" => kids, "Count" => count, "Resources" => resources,
            "MediaBox" => vec![0.into(), 0.into(), 595.into(), 842.into()],
        }),
    );
    let catalog = doc.add_object(dictionary! {"Type" => "Catalog", "Pages" => pages_id});
    doc.trailer.set("Root", catalog);
    doc.compress();
    doc.save(path).expect("save PDF");
}

/// Two columns of three lines, drawn column after column, as typesetting programs do.
const LEFT: [&str; 3] = [
    "Full-time staff receive 27 days of",
    "paid annual leave in each leave year.",
    "Unused leave does not carry over.",
];
const RIGHT: [&str; 3] = [
    "Visitor parking is in bays 40 to 48",
    "behind the warehouse, and visitors",
    "must sign in at the front desk.",
];

fn answers(dir: &Path, ext_doc: &str, image_doc: &str) -> std::path::PathBuf {
    let p = dir.join("answers.jsonl");
    write_jsonl(
        &p,
        &[
            json!({"id": "left", "groups": ["staff"], "answer": "Full-time staff receive 27 days of paid annual leave in each leave year [1].",
                   "citations": [{"ref": "1", "doc": ext_doc, "page": 1}]}),
            json!({"id": "right", "groups": ["staff"], "answer": "Visitors must sign in at the front desk [1].",
                   "citations": [{"ref": "1", "doc": ext_doc}]}),
            json!({"id": "page2", "groups": ["staff"], "answer": "Fire drills take place every March [1].",
                   "citations": [{"ref": "1", "doc": ext_doc, "page": 2}]}),
            json!({"id": "nopage", "groups": ["staff"], "answer": "Fire drills take place every March [1].",
                   "citations": [{"ref": "1", "doc": ext_doc, "page": 9}]}),
            json!({"id": "image", "groups": ["staff"], "answer": "The floor plan shows two exits [1].",
                   "citations": [{"ref": "1", "doc": image_doc}]}),
            json!({"id": "emptypage", "groups": ["staff"], "answer": "The floor plan shows two exits [1].",
                   "citations": [{"ref": "1", "doc": ext_doc, "page": 3}]}),
        ],
    );
    p
}

fn assert_pdf_findings(store: &Path, dir: &Path, doc: &str, image_doc: &str) {
    std::fs::write(store.join("manifest.json"), r#"{"default_access": ["staff"]}"#)
        .expect("manifest");
    let answers = answers(dir, doc, image_doc);
    let out = check(
        dir,
        &["--store", store.to_str().expect("path"), "--answers", answers.to_str().expect("path")],
    );
    assert_eq!(out.code, 1, "{}", out.stderr);
    // Each column reads as written: a sentence that runs over three lines of the left
    // column is carried, on page 1.
    assert_eq!(out.citation("left", "1").0, "ok");
    assert_eq!(out.sentence("left", 0).0, "supported", "{}", out.answer("left"));
    let ev = &out.answer("left")["sentences"][0]["evidence"];
    assert_eq!(ev["page"], 1);
    assert!(ev["text"].as_str().expect("text").contains("27 days of\npaid annual leave"), "{ev}");
    assert_eq!(out.sentence("right", 0).0, "supported", "{}", out.answer("right"));
    assert_eq!(out.answer("right")["sentences"][0]["evidence"]["page"], 1);
    assert_eq!(out.sentence("page2", 0).0, "supported");
    assert_eq!(out.answer("page2")["sentences"][0]["evidence"]["page"], 2);
    assert!(out.html.contains("p. 2,"), "the report shows the page");
    let (status, detail) = out.citation("nopage", "1");
    assert_eq!(status, "bad_locator");
    assert!(detail.contains("the document has 3 pages"), "{detail}");
    // The image-only file is reported, and citing it is dead with the reason.
    let problems =
        out.findings["inputs"]["store"]["problems"].as_array().expect("problems").clone();
    assert!(
        problems.iter().any(|p| p["path"] == image_doc
            && p["message"].as_str().expect("m").contains("no text layer")),
        "{problems:?}"
    );
    let (status, detail) = out.citation("image", "1");
    assert_eq!(status, "dead");
    assert!(detail.contains("could not be read") && detail.contains("no text layer"), "{detail}");
    // Page 3 of the text PDF is an image: reported, and citing it is a bad locator.
    assert!(problems.iter().any(|p| p["path"] == doc && p["field"] == "page 3"), "{problems:?}");
    let (status, detail) = out.citation("emptypage", "1");
    assert_eq!(status, "bad_locator");
    assert!(detail.contains("page 3 has no text layer"), "{detail}");
}

#[test]
fn pdfs_written_by_lopdf_two_columns_pages_and_no_text_layer() {
    let dir = tempfile::tempdir().expect("temp");
    let store = dir.path().join("store");
    std::fs::create_dir_all(&store).expect("store");
    let mut page1: Vec<(i64, i64, &str)> = Vec::new();
    for (i, l) in LEFT.iter().enumerate() {
        page1.push((72, 720 - 14 * i as i64, l));
    }
    for (i, l) in RIGHT.iter().enumerate() {
        page1.push((320, 720 - 14 * i as i64, l));
    }
    let page2 = [(72, 720, "Fire drills take place every March and September.")];
    lopdf_pdf(&store.join("handbook.pdf"), &[Some(&page1), Some(&page2), None]);
    lopdf_pdf(&store.join("floor-plan.pdf"), &[None]);
    assert_pdf_findings(&store, dir.path(), "handbook.pdf", "floor-plan.pdf");
}

fn ps_string(s: &str) -> String {
    s.replace('\\', "\\\\").replace('(', "\\(").replace(')', "\\)")
}

#[test]
fn pdfs_written_by_ghostscript_two_columns_pages_and_no_text_layer() {
    let gs = Command::new("gs").arg("--version").output().is_ok_and(|o| o.status.success());
    if !have_tool(gs, "Ghostscript (gs, Debian's ghostscript package)") {
        return;
    }
    let dir = tempfile::tempdir().expect("temp");
    let store = dir.path().join("store");
    std::fs::create_dir_all(&store).expect("store");
    let mut ps = String::from("%!PS\n/Helvetica findfont 11 scalefont setfont\n");
    for (col, x) in [(LEFT, 72), (RIGHT, 320)] {
        for (i, l) in col.iter().enumerate() {
            ps.push_str(&format!("{x} {} moveto ({}) show\n", 720 - 14 * i, ps_string(l)));
        }
    }
    ps.push_str("showpage\n/Helvetica findfont 11 scalefont setfont\n72 720 moveto (Fire drills take place every March and September.) show\nshowpage\n");
    let image = "gsave 72 500 translate 200 200 scale 8 8 8 [8 0 0 8 0 0] {<00ff00ff00ff00ff>} image grestore\n";
    ps.push_str(image);
    ps.push_str("showpage\n");
    let plan = format!("%!PS\n0.5 setgray 72 300 200 100 rectfill\n{image}showpage\n");
    for (name, text) in [("handbook", ps), ("floor-plan", plan)] {
        let src = dir.path().join(format!("{name}.ps"));
        std::fs::write(&src, text).expect("write PostScript");
        let status = Command::new("gs")
            .args(["-q", "-dNOPAUSE", "-dBATCH", "-dSAFER", "-sDEVICE=pdfwrite"])
            .arg(format!("-sOutputFile={}", store.join(format!("{name}.pdf")).display()))
            .arg(&src)
            .status()
            .expect("run gs");
        assert!(status.success(), "gs failed on {name}");
    }
    assert_pdf_findings(&store, dir.path(), "handbook.pdf", "floor-plan.pdf");
}
