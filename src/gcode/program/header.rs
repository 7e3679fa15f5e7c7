//! The programs' header lines that let a program be verified without the
//! job that made it: where the design sits (its pose), the zones kept on
//! purpose (tabs), the stock; written here and read back.

use crate::model::job::Block;
use crate::toolpath::setup::Pose;

/// The header line that records where the design sits in the block, read
/// back by [`read_pose`].
pub fn pose_line(p: &Pose) -> String {
    format!(
        "placement: the design turned {:.6} deg about Y round its point X{:.4} Y{:.4} Z{:.4}, which stands at X{:.4} Y{:.4} Z{:.4} in setup 1 (mm)",
        p.pitch,
        p.centre[0],
        p.centre[1],
        p.centre[2],
        p.centre_at[0],
        p.centre_at[1],
        p.centre_at[2]
    )
}

/// The header line that records the tabs' rectangles (setup 1, mm), read
/// back by [`read_kept`]; `[]` without tabs.
pub fn kept_line(rects: &[[[f64; 2]; 2]]) -> String {
    let list: Vec<String> = rects
        .iter()
        .map(|[lo, hi]| format!("X{:.4} Y{:.4} to X{:.4} Y{:.4}", lo[0], lo[1], hi[0], hi[1]))
        .collect();
    format!(
        "left standing on purpose (tabs and the ball's reach round them, setup 1, mm): [{}]",
        list.join("; ")
    )
}

/// The rectangles [`kept_line`] recorded, if the header has the line.
pub fn read_kept(header: &str) -> Option<Vec<[[f64; 2]; 2]>> {
    let (_, rest) = header.split_once("setup 1, mm-: [")?;
    let (list, _) = rest.split_once(']')?;
    if list.trim().is_empty() {
        return Some(vec![]);
    }
    list.split(';')
        .map(|r| {
            let (a, b) = r.split_once(" to ")?;
            let lo = axis_words::<2>(a)?;
            let hi = axis_words::<2>(b)?;
            Some([lo, hi])
        })
        .collect()
}

/// A program's leading comments as one text (wrapped comments, as GRBL
/// programs carry them, joined back at their spaces).
pub fn header_text(program: &str) -> String {
    let mut parts = vec![];
    for line in program.lines() {
        let t = line.trim();
        if t.is_empty() || t == "%" || (t.starts_with('O') && !t.contains('(')) {
            continue;
        }
        match t.strip_prefix('(').and_then(|c| c.strip_suffix(')')) {
            Some(c) if !c.contains(['(', ')']) => parts.push(c.trim()),
            _ => break,
        }
    }
    parts.join(" ")
}

/// The numbers after `X`, `Y` (and `Z`) in the words that open `text`.
fn axis_words<const N: usize>(text: &str) -> Option<[f64; N]> {
    let mut v = [0.0f64; N];
    let mut words = text.split_whitespace();
    for (k, axis) in ['X', 'Y', 'Z'].into_iter().take(N).enumerate() {
        let w = words.next()?.trim_end_matches([',', ')']);
        v[k] = w.strip_prefix(axis)?.parse().ok()?;
    }
    v.iter()
        .all(|c: &f64| c.is_finite() && c.abs() <= 100_000.0)
        .then_some(v)
}

/// The placement a program's header records ([`pose_line`]), if it has
/// one; `header` is [`header_text`]'s.
pub fn read_pose(header: &str) -> Option<Pose> {
    let (_, line) = header.split_once("placement: the design turned ")?;
    let (pitch, rest) = line.split_once(" deg about Y round its point ")?;
    let (from, to) = rest.split_once(", which stands at ")?;
    let pitch: f64 = pitch.trim().parse().ok()?;
    (pitch.is_finite() && pitch.abs() <= 90.0).then_some(())?;
    Some(Pose {
        pitch,
        centre: axis_words(from)?,
        centre_at: axis_words(to)?,
    })
}

/// The flat block a program's header records (`stock: L x W x T mm block
/// …, front-left corner at machine X… Y…`): the block and its table
/// position. A blank (rockered, or tapered in plan) is not rebuilt from a
/// header: `None` with what is missing.
pub fn read_stock(header: &str) -> Result<Option<(Block, [f64; 2])>, String> {
    let Some((_, line)) = header.split_once("stock: ") else {
        return Ok(None);
    };
    let bad = || "the stock in the programs' header is not readable".to_string();
    let (sizes, rest) = line.split_once(" mm ").ok_or_else(bad)?;
    if rest.starts_with("rockered blank") || rest.starts_with("flat blank tapered in plan") {
        return Err(
            "the programs were cut from a shaped blank, whose shape is not in their header".into(),
        );
    }
    if !rest.starts_with("block") {
        return Err(bad());
    }
    let v: Vec<f64> = sizes
        .split(" x ")
        .map(|t| t.trim().parse::<f64>())
        .collect::<Result<_, _>>()
        .map_err(|_| bad())?;
    let [l, w, t] = v[..] else { return Err(bad()) };
    if !(l > 0.0 && w > 0.0 && t > 0.0 && l.max(w).max(t) <= 20_000.0) {
        return Err(bad());
    }
    let (_, at) = rest
        .split_once("front-left corner at machine ")
        .ok_or_else(bad)?;
    let xy = axis_words::<2>(at).ok_or_else(bad)?;
    Ok(Some((Block::flat(l, w, t), xy)))
}
