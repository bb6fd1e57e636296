//! The analysis run as its named steps, in order, into one result.

use super::context::{AnalysisError, Context};
use super::prepare::{Prepared, LOSSY};
use super::result::{AlphaFit, Analysis, CycleResult, InputFacts, LagFacts, LossFacts, Traces};
use super::segments::MIN_SPAN_K;
use super::{alpha, curie, cycles, fit_data, judge, lag_estimate, model, segments};
use super::{drift, loss_verdict};
use crate::input::clean;
use crate::input::dataset::Series;
use crate::units::{self, Kind, Phrase, Qty};

/// A probe that came back more than this far from where it started is noted, K.
pub const PROBE_RETURN_K: f64 = 2.0;

/// A result and the traces beside it.
type Traced = (Analysis, Traces);

/// Analyse a series: the result alone.
pub fn analyze(s: &Series, ctx: &Context) -> Result<Analysis, AnalysisError> {
    analyze_traced(s, ctx).map(|(a, _)| a)
}

/// Analyse a series: the result, and beside it the per-sample traces the plots draw.
pub fn analyze_traced(s: &Series, ctx: &Context) -> Result<Traced, AnalysisError> {
    check_finite(s)?;
    // a file that holds several records is split where they meet; else the heat cycles
    let split = !s.breaks.is_empty();
    let ranges = if split {
        let mut b = vec![0];
        b.extend(s.breaks.iter().copied());
        b.push(s.time_s.len());
        b.windows(2).map(|w| w[0]..w[1]).collect()
    } else {
        cycles::find(&s.temp_c)
    };
    if ranges.len() < 2 {
        let (mut a, traces) = analyze_cycle(s, ctx, clean::notes(s))?;
        a.cycles = vec![cycle_of(&a, s)];
        a.input.repairs = s.repairs.clone();
        return Ok((a, traces));
    }
    let parts: Vec<Series> = ranges.iter().map(|r| cycles::slice(s, r.clone())).collect();
    let results: Vec<Result<Traced, AnalysisError>> = parts
        .iter()
        .map(|part| analyze_cycle(part, ctx, Vec::new()))
        .collect();
    let mut notes = clean::notes(s);
    let (what, part_word) = if split {
        ("records in the file, analysed apart", "part")
    } else {
        ("heat cycles found", "cycle")
    };
    let mut note = Phrase::from(format!("{} {what} (", parts.len()));
    for (k, (r, part)) in results.iter().zip(&parts).enumerate() {
        if k > 0 {
            note.push("; ");
        }
        match r {
            Ok((a, _)) => {
                note.push(format!("{part_word} {} to ", k + 1));
                note.push(units::temp_q(a.lag.max_magnet_temp_c, 0));
                note.push(format!(
                    ": loss {}",
                    a.loss
                        .pct
                        .zip(a.loss.u95_pct)
                        .map_or("not computed".into(), |(l, u)| format!("{l:.3} ± {u:.3} %"))
                ));
            }
            Err(e) => note.push(format!(
                "{part_word} {} from t = {:.0} s: {e}",
                k + 1,
                part.time_s[0]
            )),
        }
    }
    note.push(if split {
        "); the results are the last part's (the parts may be different magnets)"
    } else {
        "); α comes from the last, stabilised cycle, the loss is the total over them all"
    });
    notes.push(note);
    let cycle_list: Vec<CycleResult> = results
        .iter()
        .zip(&parts)
        .map(|(r, part)| match r {
            Ok((a, _)) => cycle_of(a, part),
            Err(_) => CycleResult {
                span_s: [part.time_s[0], part.time_s[part.time_s.len() - 1]],
                peak_c: part
                    .temp_c
                    .iter()
                    .copied()
                    .fold(f64::NEG_INFINITY, f64::max),
                irreversible_loss_pct: None,
                irreversible_loss_u95_pct: None,
            },
        })
        .collect();
    let offset = ranges[ranges.len() - 1].start;
    let mut traces_tm = Vec::with_capacity(s.time_s.len());
    let mut traces_flux = Vec::with_capacity(s.time_s.len());
    for (r, part) in results.iter().zip(&parts) {
        match r {
            Ok((_, t)) => {
                traces_tm.extend_from_slice(&t.magnet_temp_c);
                traces_flux.extend_from_slice(&t.flux_corrected_mt);
            }
            Err(_) => {
                traces_tm.extend_from_slice(&part.temp_c);
                traces_flux.extend_from_slice(&part.flux_mt);
            }
        }
    }
    let (mut a, last) = results.into_iter().last().expect("two or more cycles")?;
    notes.append(&mut a.notes);
    a.notes = notes;
    a.cycles = cycle_list;
    a.input.samples = s.time_s.len();
    a.input.rows_left_out = s.skipped.len();
    a.input.spikes_rejected = s.spikes.len();
    a.input.repairs = s.repairs.clone();
    let traces = Traces {
        segments: last.segments.map(|g| g.shifted(offset)),
        magnet_temp_c: traces_tm,
        flux_corrected_mt: traces_flux,
    };
    if !split {
        super::cycle_total::judge_total(&mut a);
    }
    Ok((a, traces))
}

/// The cycle summary of one analysed cycle.
fn cycle_of(a: &Analysis, s: &Series) -> CycleResult {
    CycleResult {
        span_s: [s.time_s[0], s.time_s[s.time_s.len() - 1]],
        peak_c: a.lag.max_magnet_temp_c,
        irreversible_loss_pct: a.loss.pct,
        irreversible_loss_u95_pct: a.loss.u95_pct,
    }
}

/// Analyse one heat cycle; `notes` so far.
fn analyze_cycle(s: &Series, ctx: &Context, notes: Vec<Phrase>) -> Result<Traced, AnalysisError> {
    analyze_cycle_with(s, ctx, notes, None)
}

/// Analyse one heat cycle; `drift`: the series is already corrected for this probe drift.
fn analyze_cycle_with(
    s: &Series,
    ctx: &Context,
    mut notes: Vec<Phrase>,
    drift: Option<drift::Drift>,
) -> Result<Traced, AnalysisError> {
    let entry_notes = notes.clone();
    let prep = Prepared::new(s, ctx, &mut notes);
    let seg = segments::find(&s.time_s, &s.temp_c, &s.temp_c);
    // the excursion judged: up from the reference before it, or down from the peak
    let rise = s.temp_c[seg.peak] - s.temp_c[seg.before.start];
    let low_after = s.temp_c[seg.peak..]
        .iter()
        .copied()
        .fold(f64::INFINITY, f64::min);
    let fall = s.temp_c[seg.peak] - low_after;
    let span = rise.max(fall);
    if span < MIN_SPAN_K {
        return Err(AnalysisError::CannotFit(format!(
            "the temperature changed only {span:.1} K (up {rise:.1} K from {:.1} °C before the peak at {:.1} °C, down {fall:.1} K after it); at least {MIN_SPAN_K:.0} K is needed",
            s.temp_c[seg.before.start], s.temp_c[seg.peak]
        )));
    }
    let collapse = curie::collapse(&prep);
    let lagged = lag_estimate::estimate(&prep, seg, span, collapse, &mut notes);
    let data = fit_data::select(&prep, &lagged, collapse)?;
    let mut a = alpha::estimate(&prep, &lagged, &data, ctx, &mut notes)?;
    let corrected = drift.is_some();
    let drift = drift.or_else(|| drift::estimate(&prep, &lagged, &a.model));
    if let (false, Some(d)) = (corrected, drift) {
        if d.matters() {
            let mut n = entry_notes;
            n.push(d.note());
            return analyze_cycle_with(&d.corrected(s), ctx, n, Some(d));
        }
    }
    if let (true, Some(d)) = (corrected, &drift) {
        let ramp_s = s.time_s[lagged.seg.peak] - s.time_s[lagged.seg.heating.start];
        drift::budget_alpha(&mut a, d, ramp_s);
    }
    let u_c = a.u_c();
    let (mut loss, by_references) =
        super::cycle_loss::cycle_loss(&prep, &lagged, ctx, &a, &mut notes);
    if let (Some(l), Some(d), true) = (loss.as_mut(), &drift, corrected) {
        drift::budget_loss(l, d);
    }
    // a drift too small to correct still bounds the loss that can be claimed as damage
    let undecided = match (&drift, corrected) {
        (Some(d), false) => drift::undecided_pct(d),
        _ => 0.0,
    };
    if let Some(l) = loss.as_ref().filter(|l| {
        l.loss_pct > l.u95_pct.max(loss_verdict::HEAT_DAMAGE_PCT) && l.loss_pct <= undecided
    }) {
        notes.push(format!("the flat stretches before and after are too short to tell a drift of the probe's zero from a loss below {undecided:.2} %: the loss of {:.2} % is not claimed as damage", l.loss_pct).into());
    }
    if !(a.alpha.is_finite() && u_c.is_finite() && a.model.b0_mt.is_finite()) {
        return Err(AnalysisError::NotFinite(format!(
            "the fit gave α = {} ± {} %/°C; nothing is judged from it",
            a.alpha, u_c
        )));
    }
    let alpha_table = table_alpha(&a.model, a.range_c[1], (a.alpha, a.u95()), &mut notes);
    let measured = judge::Measured {
        alpha_table,
        alpha: (a.alpha, a.u95()),
        b20_mt: a.model.b0_mt,
        // the fit's own error of B20, inflated as α's is for neighbouring residuals
        b20_u_mt: a.fit.covariance[0].max(0.0).sqrt() * a.inflation,
        peak_c: lagged.tm[lagged.seg.peak],
        fit_top_c: a.range_c[1],
        curie_c: lagged.curie_c,
        loss: loss
            .as_ref()
            .map(|l| (l.loss_pct, l.u95_pct.max(undecided))),
    };
    let judged = judge::judge(&measured, ctx, &mut notes);
    fit_notes(lagged.loss > LOSSY, a.range_c[1], &mut notes);
    let (remanence, judgement) = judged.into_parts(ctx.reference.is_some());
    let analysis = Analysis {
        schema_version: super::result::SCHEMA_VERSION,
        provenance: Default::default(),
        input: InputFacts {
            samples: s.time_s.len(),
            rows_left_out: s.skipped.len(),
            spikes_rejected: s.spikes.len(),
            repairs: Default::default(),
            probe_drift: drift.map(|d| d.result(corrected)),
            uncalibrated: false,
        },
        lag: LagFacts {
            time_constant_s: lagged.tau_s,
            max_magnet_temp_c: lagged.tm[lagged.seg.peak],
            curie_estimate_c: lagged.curie_c,
        },
        alpha: AlphaFit::of(a, &data, measured.b20_u_mt),
        loss: LossFacts::of(loss, by_references),
        remanence,
        judgement,
        cycles: Vec::new(),
        notes,
    };
    let traces = Traces {
        segments: Some(lagged.seg),
        magnet_temp_c: lagged.tm,
        flux_corrected_mt: prep.flux,
    };
    Ok((analysis, traces))
}

/// α over the families' table range (20…100 °C) with its U95: a wider fit's curve converted
/// to that range (and said so), else the fitted α.
fn table_alpha(
    m: &model::Quadratic,
    top_c: f64,
    fitted: (f64, f64),
    notes: &mut Vec<Phrase>,
) -> (f64, f64) {
    if top_c <= judge::TABLE_TOP_C {
        return fitted;
    }
    let at = m.mean_alpha_pct_per_c(judge::TABLE_TOP_C);
    notes.push(crate::phrase![
        "the material family is judged on α over ",
        Qty::range(Kind::Temp, model::REFERENCE_C, judge::TABLE_TOP_C, 0),
        " from the fitted curve (",
        units::alpha(at, 4),
        "), the range the families' table states",
    ]);
    (at, fitted.1)
}

/// What the reader should know about the fit: fitted on the cooling branch after a loss, or
/// over a range shorter than α is usually quoted for.
fn fit_notes(lossy: bool, top_c: f64, notes: &mut Vec<Phrase>) {
    if lossy {
        notes.push(
            "the magnet lost flux during the excursion: α is fitted on the cooling branch alone (the heating branch mixes reversible and irreversible change); for a datasheet value measure a fresh magnet at or below its safe test peak".into(),
        );
    }
    if top_c - model::REFERENCE_C < judge::QUOTED_SPAN_K {
        notes.push(crate::phrase![
            "fitted only up to ",
            units::temp_q(top_c, 0),
            ": α is usually quoted for ",
            Qty::range(Kind::Temp, 20.0, 100.0, 0),
            " or ",
            Qty::range(Kind::Temp, 20.0, 150.0, 0),
        ]);
    }
}

/// Refuse a series with a value that is not a finite number, naming the sample and the field.
fn check_finite(s: &Series) -> Result<(), AnalysisError> {
    let mut fields: Vec<(&str, &[f64])> = vec![
        ("time_s", &s.time_s),
        ("temp_C", &s.temp_c),
        ("flux_mT", &s.flux_mt),
    ];
    if let Some(p) = &s.probe_c {
        fields.push(("probe_temp_C", p));
    }
    for (name, v) in fields {
        if let Some(i) = v.iter().position(|x| !x.is_finite()) {
            return Err(AnalysisError::NotFinite(format!(
                "sample {} (t = {} s): {name} is {}",
                i + 1,
                s.time_s[i],
                v[i]
            )));
        }
    }
    Ok(())
}
