//! The host library's house: its rooms (the top-level modules of `host/src`) in layers, data
//! flowing one way. Every `crate::room` a room's code names (test modules and comments left
//! out) is an arrow; no arrow may run up a layer and no rooms may import each other round a
//! circle. The layers are DEVELOPERS.md's map, lowest first.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// The layers, lowest first; a room may use its own layer and those below.
const LAYERS: &[&[&str]] = &[
    &[
        "units",
        "timestamps",
        "user_dirs",
        "values",
        "output",
        "inspection",
        "formats",
    ],
    &[
        "link",
        "conversion",
        "calibration",
        "families",
        "specs",
        "magnets",
        "profiles",
        "safe_peak",
        "test_plan",
        "rig_time",
    ],
    &["event", "run_dir", "frame_log", "virtual_rig"],
    &["input"],
    &[
        "analysis",
        "lot",
        "master",
        "acceptance_plan",
        "survey_rank",
    ],
    &["history"],
    &["plots", "report"],
    &["jobs"],
    &["console", "cli"],
];

fn source_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.is_dir() {
            source_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

/// Each room's arrows to the other rooms.
fn arrows(src: &Path) -> BTreeMap<String, BTreeSet<String>> {
    let mut files = Vec::new();
    source_files(src, &mut files);
    let room = |p: &Path| {
        let first = p.strip_prefix(src).unwrap().components().next().unwrap();
        let name = first.as_os_str().to_string_lossy().into_owned();
        name.trim_end_matches(".rs").to_string()
    };
    let rooms: BTreeSet<String> = files.iter().map(|p| room(p)).collect();
    let mut out: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for f in &files {
        let from = room(f);
        if from == "lib" || from == "main" {
            continue; // the crate's roots, not rooms
        }
        let text = std::fs::read_to_string(f).unwrap();
        let code = text.split("#[cfg(test)]").next().unwrap_or("");
        for line in code.lines().filter(|l| !l.trim_start().starts_with("//")) {
            let mut rest = line;
            while let Some(i) = rest.find("crate::") {
                rest = &rest[i + "crate::".len()..];
                let names: Vec<&str> = if let Some(group) = rest.strip_prefix('{') {
                    let end = group.find('}').unwrap_or(group.len());
                    group[..end].split(',').collect()
                } else {
                    vec![rest]
                };
                for n in names {
                    let n: String = n
                        .trim()
                        .chars()
                        .take_while(|c| c.is_alphanumeric() || *c == '_')
                        .collect();
                    if n != from && rooms.contains(&n) {
                        out.entry(from.clone()).or_default().insert(n);
                    }
                }
            }
        }
    }
    out
}

/// The rooms on a circle of arrows, if any (depth-first search for a back edge).
fn circle(arrows: &BTreeMap<String, BTreeSet<String>>) -> Option<Vec<String>> {
    fn visit(
        at: &str,
        arrows: &BTreeMap<String, BTreeSet<String>>,
        path: &mut Vec<String>,
        done: &mut BTreeSet<String>,
    ) -> Option<Vec<String>> {
        if let Some(i) = path.iter().position(|p| p == at) {
            return Some(path[i..].to_vec());
        }
        if !done.insert(at.to_string()) {
            return None;
        }
        path.push(at.to_string());
        for next in arrows.get(at).into_iter().flatten() {
            if let Some(c) = visit(next, arrows, path, done) {
                return Some(c);
            }
        }
        path.pop();
        None
    }
    let mut done = BTreeSet::new();
    arrows
        .keys()
        .find_map(|r| visit(r, arrows, &mut Vec::new(), &mut done))
}

#[test]
fn the_host_library_has_no_circle_and_no_arrow_up_its_layers() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("../host/src");
    let arrows = arrows(&src);
    let layer: BTreeMap<&str, usize> = LAYERS
        .iter()
        .enumerate()
        .flat_map(|(i, l)| l.iter().map(move |r| (*r, i)))
        .collect();
    let unplaced: Vec<&String> = arrows
        .iter()
        .flat_map(|(a, to)| std::iter::once(a).chain(to))
        .filter(|r| !layer.contains_key(r.as_str()))
        .collect();
    assert!(unplaced.is_empty(), "rooms in no layer: {unplaced:?}");
    let up: Vec<String> = arrows
        .iter()
        .flat_map(|(a, to)| to.iter().map(move |b| (a, b)))
        .filter(|(a, b)| layer.get(a.as_str()) < layer.get(b.as_str()))
        .map(|(a, b)| format!("{a} -> {b}"))
        .collect();
    assert!(up.is_empty(), "arrows up the house: {up:?}");
    assert_eq!(circle(&arrows), None, "rooms importing each other round");
    // the test sees the house: the acquisition reaches down to the link, the render layer
    // to the analysis
    assert!(arrows["frame_log"].contains("event") && arrows["report"].contains("analysis"));
}

#[test]
fn a_circle_and_an_arrow_up_are_seen() {
    let mut a: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    a.entry("analysis".into())
        .or_default()
        .insert("plots".into());
    a.entry("plots".into())
        .or_default()
        .insert("analysis".into());
    assert!(circle(&a).is_some_and(|c| c.len() == 2));
    a.get_mut("plots").unwrap().clear();
    assert_eq!(circle(&a), None);
}
