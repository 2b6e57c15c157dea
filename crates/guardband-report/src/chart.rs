//! The current chart of one regulator: every bar on one current axis, so a
//! reviewer sees which bar crosses which. Colours are the Okabe–Ito palette
//! (distinguishable with the common colour-vision deficiencies); every bar
//! also carries its label and value as text, and the margin is hatched, so
//! nothing depends on colour alone.

use crate::figures::{BarKind, Figures};
use svg::Document;
use svg::node::element::{Definitions, Line, Path, Pattern, Rectangle, Text, Title};

pub(crate) const WIDTH: f64 = 920.0;
const LABEL_WIDTH: f64 = 250.0;
const VALUE_WIDTH: f64 = 250.0;
const ROW: f64 = 30.0;
const TOP: f64 = 56.0;
const BOTTOM: f64 = 64.0;
pub(crate) const FONT: &str = "DejaVu Sans, Verdana, Arial, sans-serif";

pub(crate) fn colour(kind: BarKind) -> &'static str {
    match kind {
        BarKind::RatedLoad => "#0072B2",   // blue
        BarKind::Margin => "#56B4E9",      // sky blue, hatched
        BarKind::WorstCase => "#D55E00",   // vermillion
        BarKind::Statistical => "#E69F00", // orange
        BarKind::Surge => "#CC79A7",       // reddish purple
        BarKind::Rating => "#009E73",      // bluish green
        BarKind::Trip => "#F0E442",        // yellow
        BarKind::Fixed => "#D55E00",       // vermillion, as a limit window
    }
}

/// A step of 1, 2 or 5 times a power of ten giving about `target` ticks.
pub(crate) fn tick_step(max: f64, target: f64) -> f64 {
    let raw = max / target;
    let power = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * power)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * power)
}

pub(crate) fn text(x: f64, y: f64, content: &str) -> Text {
    Text::new(content)
        .set("x", x)
        .set("y", y)
        .set("font-family", FONT)
        .set("font-size", 13)
        .set("fill", "#1a1a1a")
}

/// An empty chart `WIDTH` wide: its accessible title, definitions, white
/// ground and heading.
pub(crate) fn frame(
    height: f64,
    title: &str,
    heading: &str,
    definitions: Option<Definitions>,
) -> Document {
    let mut doc = Document::new()
        .set("viewBox", (0, 0, WIDTH, height))
        .set("width", WIDTH)
        .set("height", height)
        .set("role", "img")
        .set("aria-labelledby", "chart-title")
        .add(Title::new(title).set("id", "chart-title"));
    if let Some(d) = definitions {
        doc = doc.add(d);
    }
    doc.add(
        Rectangle::new()
            .set("width", WIDTH)
            .set("height", height)
            .set("fill", "#ffffff"),
    )
    .add(
        text(12.0, 26.0, heading)
            .set("font-size", 16)
            .set("font-weight", "bold"),
    )
}

/// The vertical grid lines and their tick labels from `lo` to `hi` every
/// `step` (in the axis' units), between `top` and the axis at `axis_y`;
/// `x_of` places a tick.
pub(crate) fn grid(
    mut doc: Document,
    lo: f64,
    hi: f64,
    step: f64,
    top: f64,
    axis_y: f64,
    x_of: &dyn Fn(f64) -> f64,
) -> Document {
    let mut tick = lo;
    while tick <= hi + step * 1e-9 {
        let x = x_of(tick);
        doc = doc
            .add(
                Line::new()
                    .set("x1", x)
                    .set("y1", top)
                    .set("x2", x)
                    .set("y2", axis_y)
                    .set("stroke", "#d0d0d0")
                    .set("stroke-width", 1),
            )
            .add(
                // Rounded to the step, so that sums of steps print clean.
                text(
                    x,
                    axis_y + 18.0,
                    &guardband_rules::show::number((tick / step).round() * step),
                )
                .set("text-anchor", "middle")
                .set("data-role", "tick"),
            );
        tick += step;
    }
    doc
}

/// The chart as an SVG document.
pub fn chart(f: &Figures) -> Document {
    let rows = f.bars.len().max(1) as f64;
    let height = TOP + rows * ROW + BOTTOM;
    let plot_left = LABEL_WIDTH;
    let plot_width = WIDTH - LABEL_WIDTH - VALUE_WIDTH;
    let scale = if f.unit == "A" { 1.0 } else { 1e3 };
    let all_max = f
        .bars
        .iter()
        .map(|b| b.hi)
        .chain(f.worst.iter().map(|w| w.0))
        .fold(0.0, f64::max)
        .max(1e-6);
    // The crossings happen around the load, the limit window and the worst
    // current; a far larger bar (an unlimited surge, a generous trace) would
    // squeeze them into a corner, so the axis stops at 2.5× that region and
    // longer bars end in an arrow.
    let focus = f
        .bars
        .iter()
        .filter(|b| !matches!(b.kind, BarKind::Surge | BarKind::Rating))
        .map(|b| b.hi)
        .chain(f.worst.iter().map(|w| w.0))
        .fold(0.0, f64::max);
    let max_si = if focus > 0.0 {
        all_max.min(2.5 * focus)
    } else {
        all_max
    };
    let clipped_any = f.bars.iter().any(|b| b.hi > max_si * 1.05);
    let step = tick_step(max_si * scale * 1.05, 6.0);
    let axis_max = (max_si * scale * 1.05 / step).ceil() * step;
    let x_of = |si: f64| plot_left + (si * scale / axis_max).clamp(0.0, 1.0) * plot_width;

    let hatch = Pattern::new()
        .set("id", "hatch")
        .set("width", 6)
        .set("height", 6)
        .set("patternUnits", "userSpaceOnUse")
        .set("patternTransform", "rotate(45)")
        .add(
            Rectangle::new()
                .set("width", 6)
                .set("height", 6)
                .set("fill", colour(BarKind::Margin)),
        )
        .add(
            Line::new()
                .set("x1", 0)
                .set("y1", 0)
                .set("x2", 0)
                .set("y2", 6)
                .set("stroke", "#ffffff")
                .set("stroke-width", 2),
        );
    let mut doc = frame(
        height,
        &format!("Currents of regulator {}", f.name),
        &format!("Regulator {}: currents on one axis", f.name),
        Some(Definitions::new().add(hatch)),
    );

    // Grid and axis.
    let axis_y = TOP + rows * ROW + 6.0;
    doc = grid(doc, 0.0, axis_max, step, TOP - 6.0, axis_y, &|tick| {
        plot_left + tick / axis_max * plot_width
    });
    let axis_label = if clipped_any {
        format!(
            "current ({}); bars ending in an arrow continue beyond the axis",
            f.unit
        )
    } else {
        format!("current ({})", f.unit)
    };
    doc = doc.add(
        text(plot_left + plot_width / 2.0, axis_y + 42.0, &axis_label)
            .set("text-anchor", "middle")
            .set("data-role", "axis-label"),
    );

    // One bar per row.
    for (i, bar) in f.bars.iter().enumerate() {
        let y = TOP + i as f64 * ROW;
        let (x0, x1) = (x_of(bar.lo.min(bar.hi)), x_of(bar.hi.max(bar.lo)));
        let fill = if bar.kind == BarKind::Margin {
            "url(#hatch)".to_string()
        } else {
            colour(bar.kind).to_string()
        };
        // A failing comparison: a cross and the words beside the value,
        // and a heavy dashed outline.
        let shown = match bar.fails {
            Some(why) => format!("✗ {} ({why})", bar.text),
            None => bar.text.clone(),
        };
        let mut rect = Rectangle::new()
            .set("x", x0)
            .set("y", y + 5.0)
            .set("width", (x1 - x0).max(1.5))
            .set("height", ROW - 10.0)
            .set("fill", fill)
            .set("stroke", "#1a1a1a")
            .set("stroke-width", if bar.fails.is_some() { 2.0 } else { 0.5 })
            .set("data-role", bar.kind.role())
            .set("data-lo-amperes", bar.lo)
            .set("data-hi-amperes", bar.hi)
            .add(Title::new(format!("{}: {shown}", bar.label)));
        if let Some(why) = bar.fails {
            rect = rect.set("stroke-dasharray", "4 2").set("data-fails", why);
        }
        doc = doc
            .add(text(12.0, y + ROW / 2.0 + 4.0, &bar.label))
            .add(rect)
            .add(text(
                WIDTH - VALUE_WIDTH + 18.0,
                y + ROW / 2.0 + 4.0,
                &shown,
            ));
        if bar.hi * scale > axis_max {
            let tip = plot_left + plot_width;
            let arrow = format!(
                "M {} {} L {} {} L {} {} Z",
                tip,
                y + 3.0,
                tip + 10.0,
                y + ROW / 2.0,
                tip,
                y + ROW - 3.0
            );
            doc = doc.add(
                Path::new()
                    .set("d", arrow)
                    .set("fill", colour(bar.kind))
                    .set("stroke", "#1a1a1a")
                    .set("stroke-width", 0.5)
                    .set("data-role", "continues"),
            );
        }
    }

    // The worst current that can flow, across every row.
    if let Some((worst, reason)) = &f.worst {
        let x = x_of(*worst);
        let path = format!("M {x} {} L {x} {}", TOP - 10.0, axis_y);
        doc = doc
            .add(
                Path::new()
                    .set("d", path)
                    .set("stroke", "#1a1a1a")
                    .set("stroke-width", 2)
                    .set("stroke-dasharray", "6 4")
                    .set("data-role", "worst-current")
                    .set("data-amperes", *worst)
                    .add(Title::new(format!("worst current: {reason}"))),
            )
            .add(
                text(
                    x,
                    TOP - 14.0,
                    &format!(
                        "worst current {}",
                        guardband_rules::show::in_unit(
                            *worst,
                            guardband_units::QuantityKind::CURRENT,
                            None
                        )
                    ),
                )
                .set("text-anchor", "middle")
                .set("font-size", 12),
            );
    }
    doc
}

#[cfg(test)]
mod tests {
    use super::tick_step;

    #[test]
    fn ticks_are_one_two_or_five_times_a_power_of_ten() {
        assert_eq!(tick_step(230.0, 6.0), 50.0);
        assert_eq!(tick_step(1.2, 6.0), 0.2);
        assert_eq!(tick_step(9.0, 6.0), 2.0);
    }
}
