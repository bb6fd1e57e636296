//! The field closed forms against magpylib 6.1.0 (Ortner & Bandeira, SoftwareX 11, 100466,
//! 2020): on-axis points (offset 0) of cylinders and cuboids with 1 T polarization.

use remanent_physics::field::{block_bz_per_br, cylinder_bz_per_br};

use crate::util::data;

#[test]
fn on_axis_fields_match_magpylib() {
    let mut rdr = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_path(data("magpylib-field-points.csv"))
        .unwrap();
    let mut checked = 0;
    for rec in rdr.records() {
        let r = rec.unwrap();
        let num = |i: usize| r[i].parse::<f64>().unwrap();
        let (d1, d2, l, gap, offset, bz) = (num(1), num(2), num(3), num(4), num(5), num(6));
        if offset != 0.0 {
            continue; // our closed forms are on-axis only
        }
        let ours = match &r[0] {
            "cylinder" => cylinder_bz_per_br(d1, l, gap),
            "cuboid" => block_bz_per_br(d1, d2, l, gap),
            other => panic!("unknown shape {other}"),
        };
        assert!(
            (ours - bz).abs() <= 1e-9 + 1e-7 * bz.abs(),
            "{} {d1}×{d2}×{l} at {gap} mm: ours {ours}, magpylib {bz}",
            &r[0]
        );
        checked += 1;
    }
    assert!(checked >= 40, "only {checked} on-axis points");
}
