//! Calibration points against the measurand range: a point the chain
//! never sees in service (a load cell calibrated at 0 kg whose cells
//! always carry the hopper's 60 kg) corrects the reading where it is not
//! used, from a condition the installed chain may not be able to reach.

use crate::diagnostics::{Code, Finding, Findings};
use crate::model::schema;
use crate::model::typed::{CalibrationMethod, StageModel};
use crate::model::Chain;
use crate::units::format::{from_si, trimmed};

/// R676 for every calibration point outside the measurand range, with
/// the nearest point inside it in the help.
pub fn points_outside_range(chain: &Chain) -> Findings {
    let mut out = Findings::new();
    let Some(measurand) = &chain.measurand else {
        return out;
    };
    let (lo, hi) = (measurand.low, measurand.high);
    let unit = &measurand.unit;
    let show = |x: f64| format!("{} {unit}", trimmed(from_si(x, unit), 6));
    for stage in &chain.stages {
        let Some(StageModel::Convert(convert)) = &stage.typed else {
            continue;
        };
        let points: Vec<f64> = match &convert.calibrate {
            Some(CalibrationMethod::Offset { at, .. }) => vec![*at],
            Some(CalibrationMethod::TwoPoint { at, .. }) => vec![at.0, at.1],
            None => continue,
        };
        let span = stage
            .params
            .iter()
            .find(|p| p.name == schema::param::CALIBRATE)
            .map_or(stage.name_span, |p| p.span);
        for at in points.into_iter().filter(|x| !(lo..=hi).contains(x)) {
            let nearest = at.clamp(lo, hi);
            let side = if at < lo { "below" } else { "above" };
            let message = format!(
                "`{}` calibrates at {}, {side} the measurand range {} .. {}",
                stage.name,
                show(at),
                show(lo),
                show(hi)
            );
            out.push(
                Finding::new(Code::R676, &chain.file, message)
                    .label(span, "this calibration point")
                    .label(measurand.span, "the range the chain sees in service")
                    .help(format!(
                        "calibrate where the chain works: the nearest point inside the range is {}; a point outside it corrects the reading where it is not used, at a condition the installed chain may not reach",
                        show(nearest)
                    )),
            );
        }
    }
    out
}
