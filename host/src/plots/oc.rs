//! The operating characteristic of a sampling plan: the probability of accepting a lot
//! against its fraction defective, with the AQL and RQL points.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::style::{legend, DrawResult, COOLING, FIT, HEATING};

/// The OC curve.
pub fn oc_curve<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    model: crate::acceptance_plan::Model,
    plan: &crate::acceptance_plan::Plan,
    aql: f64,
    rql: f64,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let pmax = (rql * 2.5).min(1.0);
    let mut c = ChartBuilder::on(root)
        .caption(
            format!("Operating characteristic: n = {}, c = {}", plan.n, plan.c),
            ("sans-serif", 24),
        )
        .margin(20)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..pmax * 100.0, 0.0..1.0)
        .map_err(e)?;
    c.configure_mesh()
        .x_desc("fraction defective in the lot, %")
        .y_desc("probability of accepting the lot")
        .label_style(("sans-serif", 16))
        .axis_desc_style(("sans-serif", 18))
        .draw()
        .map_err(e)?;
    c.draw_series(LineSeries::new(
        (0..=300).map(|k| {
            let p = pmax * f64::from(k) / 300.0;
            (
                p * 100.0,
                crate::acceptance_plan::accept_probability(model, plan.n, plan.c, p),
            )
        }),
        COOLING.stroke_width(3),
    ))
    .map_err(e)?
    .label("OC curve")
    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], COOLING.stroke_width(3)));
    c.draw_series([Circle::new(
        (aql * 100.0, plan.accept_at_aql),
        6,
        FIT.filled(),
    )])
    .map_err(e)?
    .label(format!(
        "AQL {:.2} %: Pa = {:.3}",
        aql * 100.0,
        plan.accept_at_aql
    ))
    .legend(|(x, y)| Circle::new((x + 10, y), 5, FIT.filled()));
    c.draw_series([Circle::new(
        (rql * 100.0, plan.accept_at_rql),
        6,
        HEATING.filled(),
    )])
    .map_err(e)?
    .label(format!(
        "RQL {:.2} %: Pa = {:.3}",
        rql * 100.0,
        plan.accept_at_rql
    ))
    .legend(|(x, y)| Circle::new((x + 10, y), 5, HEATING.filled()));
    legend(&mut c, 16)?;
    root.present().map_err(e)
}
