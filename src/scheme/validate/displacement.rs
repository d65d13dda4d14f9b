//! Checks of a pump's kind (`pump_type`) and of a positive-displacement pump's measured table,
//! each problem with its field path (and so its line) and what would be right.

use super::Ck;
use crate::physics::displacement::TableError;
use crate::physics::water;
use crate::scheme::model::{Borehole, DisplacementRowSi, DriveKind, Pump, PumpKind, Tank};
use crate::scheme::raw::RawPump;

/// The names `pump_type` accepts.
pub const PUMP_TYPES: &[&str] = &["centrifugal", "positive_displacement"];

/// True when the file asks for a positive-displacement pump (by `pump_type` or by giving a
/// table), so the table's checks decide the pump's kind.
pub fn wanted(p: &RawPump) -> bool {
    p.pump_type.as_deref() == Some("positive_displacement") || p.displacement_table.is_some()
}

/// Checks the keys that decide a pump's kind: a known `pump_type`, no kind keys on hand
/// pumps or rams, and never a curve and a table in one pump.
pub fn check_kind_keys(c: &mut Ck, f: &str, p: &RawPump, drive: DriveKind) {
    if let Some(t) = &p.pump_type
        && !PUMP_TYPES.contains(&t.as_str())
    {
        c.err(
            &format!("{f}.pump_type"),
            format!(
                "`{t}` is not a pump type; use {} (the default) or {}",
                PUMP_TYPES[0], PUMP_TYPES[1]
            ),
        );
    }
    if matches!(drive, DriveKind::Hand | DriveKind::Ram) {
        for (key, given) in [
            ("pump_type", p.pump_type.is_some()),
            ("displacement_table", p.displacement_table.is_some()),
        ] {
            if given {
                c.err(
                    &format!("{f}.{key}"),
                    "applies to motor pumps (drive solar, generator or grid); a hand pump or ram is described by its own section",
                );
            }
        }
        return;
    }
    let pd = p.pump_type.as_deref() == Some("positive_displacement");
    if p.displacement_table.is_some() && !pd {
        c.err(
            &format!("{f}.displacement_table"),
            "a measured displacement table belongs to a positive-displacement pump; add `pump_type: positive_displacement` (or give a centrifugal `curve` instead)",
        );
    }
    if pd || p.displacement_table.is_some() {
        if p.curve.is_some() {
            c.err(
                &format!("{f}.curve"),
                "a pump is read either from a centrifugal curve or from a displacement table, not both; keep `displacement_table` for a positive-displacement pump and remove `curve`",
            );
        }
        for (key, given) in [
            ("start_power_w", p.start_power_w.is_some()),
            ("min_speed_fraction", p.min_speed_fraction.is_some()),
        ] {
            if given {
                c.err(
                    &format!("{f}.{key}"),
                    "belongs to a centrifugal curve; for a displacement pump give the start power in `displacement_table.start_power_w` (or per head)",
                );
            }
        }
    }
}

/// Checks a displacement pump's table and converts it to SI.
pub fn check(c: &mut Ck, f: &str, p: &RawPump, drive: DriveKind) -> PumpKind {
    let tf = format!("{f}.displacement_table");
    let fallback = PumpKind::Displacement {
        rows: Vec::new(),
        rated_power_w: 1.0,
        stall_head_m: 1.0,
        fixed_speed: false,
        measured_at_setting_depth_m: None,
    };
    let Some(t) = &p.displacement_table else {
        c.err(
            &tf,
            "a positive-displacement pump needs its measured table: rated_power_w, stall_head_m and heads (each with head_m and points of power_w and flow_l_per_min)",
        );
        return fallback;
    };
    let rated = c.positive(&format!("{tf}.rated_power_w"), t.rated_power_w, 1.0e6, "W");
    let stall = c.positive(&format!("{tf}.stall_head_m"), t.stall_head_m, 2000.0, "m");
    let common_start = t
        .start_power_w
        .map(|w| c.range(&format!("{tf}.start_power_w"), w, 0.0, 1.0e6, "W"));
    let depth = t.measured_at_setting_depth_m.map(|d| {
        c.range(
            &format!("{tf}.measured_at_setting_depth_m"),
            d,
            0.0,
            2000.0,
            "m below ground",
        )
    });
    let fixed = t.heads.iter().any(|h| h.points.is_none());
    if fixed && drive == DriveKind::Solar {
        c.err(
            &format!("{tf}.heads"),
            "a solar drive needs the flow at several input powers at each head (`points`); one flow and power per head describes a fixed-speed unit on a generator or the mains",
        );
    }
    let problems_before = c.problems.len();
    let mut rows = Vec::new();
    for (j, h) in t.heads.iter().enumerate() {
        let hf = format!("{tf}.heads[{j}]");
        let head_m = c.range(&format!("{hf}.head_m"), h.head_m, 0.0, 2000.0, "m");
        let mut points = Vec::new();
        match (&h.points, h.flow_l_per_min, h.power_w) {
            (Some(pts), None, None) => {
                if fixed {
                    c.err(&format!("{hf}.points"), "every head of one table is given the same way: all with `points` (variable drive), or all with one `flow_l_per_min` and `power_w` (fixed speed)");
                }
                for (k, pt) in pts.iter().enumerate() {
                    let pf = format!("{hf}.points[{k}]");
                    let w = c.range(&format!("{pf}.power_w"), pt.power_w, 0.0, 1.0e6, "W");
                    let q = c.range(
                        &format!("{pf}.flow_l_per_min"),
                        pt.flow_l_per_min,
                        0.0,
                        100_000.0,
                        "L/min",
                    );
                    points.push((w, water::m3_per_s_from_l_per_min(q)));
                }
            }
            (None, Some(q), Some(w)) => {
                let w = c.range(&format!("{hf}.power_w"), w, 0.0, 1.0e6, "W");
                let q = c.range(&format!("{hf}.flow_l_per_min"), q, 0.0, 100_000.0, "L/min");
                points.push((w, water::m3_per_s_from_l_per_min(q)));
            }
            _ => {
                c.err(&hf, "give either `points` (flow_l_per_min at several power_w, for a variable drive) or one `flow_l_per_min` and `power_w` (a fixed-speed unit), not both or neither");
            }
        }
        let start = if fixed {
            if h.start_power_w.is_some() {
                c.err(
                    &format!("{hf}.start_power_w"),
                    "a fixed-speed unit runs at its row's power; leave the start power out",
                );
            }
            0.0
        } else {
            match (h.start_power_w, common_start) {
                (Some(w), _) => c.range(&format!("{hf}.start_power_w"), w, 0.0, 1.0e6, "W"),
                (None, Some(w)) => w,
                (None, None) => {
                    c.err(&format!("{hf}.start_power_w"), "give the input power at which the pump starts to deliver at this head, or one `displacement_table.start_power_w` for every head");
                    0.0
                }
            }
        };
        rows.push(DisplacementRowSi {
            head_m,
            start_power_w: start,
            points,
            index: j,
        });
    }
    let kind = PumpKind::Displacement {
        rows,
        rated_power_w: rated,
        stall_head_m: stall,
        fixed_speed: fixed,
        measured_at_setting_depth_m: depth,
    };
    if c.problems.len() == problems_before
        && let Some(Err(e)) = kind.displacement_table()
    {
        let (field, msg) = locate_error(&tf, &e, t.start_power_w.is_some(), &p.displacement_table);
        c.err(&field, msg);
    }
    kind
}

/// The field a table error points at, and the message with what would be right.
fn locate_error(
    tf: &str,
    e: &TableError,
    common_start: bool,
    raw: &Option<crate::scheme::raw::RawDisplacementTable>,
) -> (String, String) {
    let fixed_row = |row: usize| {
        raw.as_ref()
            .and_then(|t| t.heads.get(row))
            .is_some_and(|h| h.points.is_none())
    };
    let point = |row: usize, point: usize, key: &str| {
        if fixed_row(row) {
            format!("{tf}.heads[{row}].{key}")
        } else {
            format!("{tf}.heads[{row}].points[{point}].{key}")
        }
    };
    let field = match e {
        TableError::TooFewHeads { .. } | TableError::StallBelowTable { .. } => {
            if matches!(e, TableError::StallBelowTable { .. }) {
                format!("{tf}.stall_head_m")
            } else {
                format!("{tf}.heads")
            }
        }
        TableError::TooFewPoints { row, .. } => format!("{tf}.heads[{row}].points"),
        TableError::FixedRowPoints { row, .. } => format!("{tf}.heads[{row}]"),
        TableError::NotFinite { row, .. } => format!("{tf}.heads[{row}]"),
        TableError::NegativeHead { row, .. } | TableError::DuplicateHead { row, .. } => {
            format!("{tf}.heads[{row}].head_m")
        }
        TableError::NegativeFlow { row, point: p } => point(*row, *p, "flow_l_per_min"),
        TableError::PowerNotPositive { row, point: p, .. }
        | TableError::DuplicatePower { row, point: p, .. }
        | TableError::AboveRated { row, point: p, .. } => point(*row, *p, "power_w"),
        TableError::FlowFallsWithPower { row, point: p, .. } => point(*row, *p, "flow_l_per_min"),
        TableError::StartNotBelowPoints { row, .. } => {
            let has_own = raw
                .as_ref()
                .and_then(|t| t.heads.get(*row))
                .is_some_and(|h| h.start_power_w.is_some());
            if !has_own && common_start {
                format!("{tf}.start_power_w")
            } else {
                format!("{tf}.heads[{row}].start_power_w")
            }
        }
        TableError::FlowRisesWithHead { row, .. } => format!("{tf}.heads[{row}]"),
        TableError::RatedNotPositive { .. } => format!("{tf}.rated_power_w"),
    };
    let fix = match e {
        TableError::FlowRisesWithHead { .. } => {
            "; check each row's `head_m` and its `flow_l_per_min` values (a row's flows belong to its head)"
        }
        TableError::AboveRated { .. } => "; raise rated_power_w or drop the point",
        TableError::StallBelowTable { .. } => {
            "; give the stall head at or above every measured head"
        }
        _ => "",
    };
    (field, format!("{e}{fix}"))
}

/// Checks that each displacement pump's table covers the scheme's static lift (tank inlet −
/// ground + rest water level + vessel pressure head): a lift outside the measured heads would
/// put every hour outside the table.
pub fn check_lift(c: &mut Ck, pumps: &[Pump], boreholes: &[Borehole], tank: &Tank, rho: f64) {
    for (i, p) in pumps.iter().enumerate() {
        let PumpKind::Displacement {
            rows, stall_head_m, ..
        } = &p.kind
        else {
            continue;
        };
        let Some(b) = boreholes.get(p.source_index) else {
            continue;
        };
        if rows.is_empty() {
            continue;
        }
        let lift = tank.inlet_elevation_m - b.ground_elevation_m
            + b.static_depth_m
            + water::head_m_from_pa(tank.delivery_pressure_pa, rho);
        let lo = rows.iter().map(|r| r.head_m).fold(f64::INFINITY, f64::min);
        let hi = rows.iter().map(|r| r.head_m).fold(0.0, f64::max);
        let tf = format!("pumps[{i}].displacement_table");
        if lift >= *stall_head_m {
            c.err(&format!("{tf}.stall_head_m"), format!("the static lift of {lift:.1} m (`tank.inlet_elevation_m` − the borehole's `ground_elevation_m` + its `static_water_level_m` + `tank.delivery_pressure_bar` as head) is at or beyond the stall head of {stall_head_m} m: this pump would deliver nothing; choose a pump for a higher head"));
        } else if lift < lo || lift > hi {
            c.err(&format!("{tf}.heads"), format!("the measured heads ({lo} to {hi} m) miss the static lift of {lift:.1} m (`tank.inlet_elevation_m` − the borehole's `ground_elevation_m` + its `static_water_level_m` + `tank.delivery_pressure_bar` as head); add a row measured at or beyond {lift:.1} m so the pump works inside its table"));
        }
    }
}
