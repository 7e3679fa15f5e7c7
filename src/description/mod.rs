//! The board description: a YAML file in the trade's own measurements.
//!
//! Reading is two steps. The YAML reader (serde-saphyr) turns the text into
//! the raw fields below, refusing unknown fields, wrong types and unreadable
//! lengths with their line and column. [`resolve`] then checks the shape
//! rules and builds the continuous [`Board`].

pub mod demo;
pub mod fittings;
pub mod located;
mod resolve;
pub mod values;
pub mod write;

use std::fmt;
use std::path::Path;

use serde::Deserialize;
use serde_saphyr::Spanned;

use crate::model::board::{Board, TailShape};
use crate::model::contour::ContourKind;
use crate::units::Unit;
pub use resolve::{MAX_LENGTH, MIN_LENGTH, resolve};
use values::{Along, Edge, LengthValue, Position, RailSize};

/// A board description file, field for field.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BoardFile {
    /// Board name; also the stem of output file names.
    pub name: Spanned<String>,
    /// Unit of bare numbers: `in` or `mm`.
    pub units: Spanned<Unit>,
    /// Free text for the shop (ignored by the shape).
    #[serde(default)]
    pub notes: Option<String>,
    /// How far from each tip nose and tail widths and thicknesses are
    /// measured (default 12 in, in inch and mm files alike).
    pub tip_station: Option<Spanned<LengthValue>>,
    /// Plan shape.
    pub outline: OutlineSpec,
    /// Bottom curve in side view.
    pub rocker: RockerSpec,
    /// Foil.
    pub thickness: ThicknessSpec,
    /// Deck.
    #[serde(default)]
    pub deck: DeckSpec,
    /// Rails.
    #[serde(default)]
    pub rails: RailsSpec,
    /// Bottom contour zones.
    #[serde(default)]
    pub bottom: Vec<ZoneSpec>,
    /// Fin setup and boxes.
    pub fins: Option<fittings::FinsSpec>,
    /// Leash plug.
    pub leash_plug: Option<Spanned<fittings::PlugSpec>>,
    /// Glassing schedule and materials, for the weight.
    pub laminate: Option<fittings::LaminateSpec>,
    /// The customer's order, for the order sheet.
    pub order: Option<fittings::OrderSpec>,
}

/// `outline:` fields.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutlineSpec {
    /// Flat (projected) length.
    pub length: Spanned<LengthValue>,
    /// Width at the wide point.
    pub width: Option<Spanned<LengthValue>>,
    /// Where the wide point is.
    pub wide_point: Option<Spanned<Position>>,
    /// Width 12 in (300 mm in a mm file) from the nose: N12.
    pub nose_width: Option<Spanned<LengthValue>>,
    /// Width 12 in from the tail: T12.
    pub tail_width: Option<Spanned<LengthValue>>,
    /// Nose tip in plan: `round` or `pointed`.
    #[serde(default)]
    pub nose: NoseShape,
    /// Width halfway from the nose to the nose-width station (6 in from the
    /// nose), as a share of `nose_width`: how full the nose is.
    pub nose_fullness: Option<Spanned<f64>>,
    /// Width halfway from the tail to the tail-width station, as a share of
    /// `tail_width` (tails that close to a point).
    pub tail_fullness: Option<Spanned<f64>>,
    /// Tail shape.
    pub tail: Spanned<TailShape>,
    /// Width across the tail's end (squash, square, swallow, diamond).
    pub tail_end_width: Option<Spanned<LengthValue>>,
    /// Squash corner radius (across the board).
    pub corner_radius: Option<Spanned<LengthValue>>,
    /// How far along the board the squash corner runs (default: the radius).
    pub corner_length: Option<Spanned<LengthValue>>,
    /// Swallow notch depth, from the tail to the notch apex.
    pub notch_depth: Option<Spanned<LengthValue>>,
    /// Diamond: from the corners of the tail's end to the tail.
    pub point_length: Option<Spanned<LengthValue>>,
    /// Width of the blunt tip of each swallow point, or of the diamond point.
    pub tip_width: Option<Spanned<LengthValue>>,
    /// Widths at stations; when given they rule.
    #[serde(default)]
    pub stations: Vec<WidthAt>,
}

/// Nose tip in plan.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum NoseShape {
    /// Closes round.
    #[default]
    Round,
    /// Closes to a point.
    Pointed,
}

/// A width at a station.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WidthAt {
    /// Where.
    pub at: Spanned<Position>,
    /// Full width there.
    pub width: Spanned<LengthValue>,
}

/// `rocker:` fields.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RockerSpec {
    /// Height of the nose tip above the flat.
    pub nose: Spanned<LengthValue>,
    /// Height of the tail above the flat.
    pub tail: Spanned<LengthValue>,
    /// Where the bottom touches the flat.
    pub low_point: Option<Spanned<Position>>,
    /// Exponent of the nose rocker curve (2 = parabola).
    pub nose_curve: Option<Spanned<f64>>,
    /// Exponent of the tail rocker curve.
    pub tail_curve: Option<Spanned<f64>>,
    /// Heights at stations; when given they rule between the tips.
    #[serde(default)]
    pub stations: Vec<HeightAt>,
}

/// A rocker height at a station.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HeightAt {
    /// Where.
    pub at: Spanned<Position>,
    /// Height of the bottom (at the stringer) above the flat.
    pub height: Spanned<LengthValue>,
}

/// `thickness:` fields.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ThicknessSpec {
    /// Maximum thickness.
    pub max: Option<Spanned<LengthValue>>,
    /// Where the maximum is.
    pub at: Option<Spanned<Position>>,
    /// Thickness 12 in (300 mm) from the nose.
    pub nose: Option<Spanned<LengthValue>>,
    /// Thickness 12 in (300 mm) from the tail.
    pub tail: Option<Spanned<LengthValue>>,
    /// Thickness the foil runs to at the nose tip before it rounds over.
    pub nose_tip: Option<Spanned<LengthValue>>,
    /// Same at the tail.
    pub tail_tip: Option<Spanned<LengthValue>>,
    /// Length over which the profile rounds over at a nose that is a point
    /// in plan (default half the nose-tip thickness).
    pub nose_rounding: Option<Spanned<LengthValue>>,
    /// Same at a tail that is a point in plan.
    pub tail_rounding: Option<Spanned<LengthValue>>,
    /// Thicknesses at stations; when given they rule.
    #[serde(default)]
    pub stations: Vec<ThicknessAt>,
}

/// A thickness at a station.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ThicknessAt {
    /// Where.
    pub at: Spanned<Position>,
    /// Thickness at the stringer.
    pub thickness: Spanned<LengthValue>,
}

/// `deck:` fields.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DeckSpec {
    /// Dome (crown) at the thickest point: how far the stringer stands above
    /// the deck where it starts to roll into the rail.
    pub dome: Option<Spanned<LengthValue>>,
}

/// `rails:` fields.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RailsSpec {
    /// `rounded` (default) or `square`.
    #[serde(default)]
    pub profile: RailProfileSpec,
    /// Rail thickness `measured_at` in from the edge: a length or a share of
    /// the stringer thickness.
    pub thickness: Option<Spanned<Along<RailSize>>>,
    /// How far in from the edge the rail thickness is measured (default 1 in).
    pub measured_at: Option<Spanned<LengthValue>>,
    /// Height of the rail's outermost point above the bottom edge.
    pub apex: Option<Spanned<Along<LengthValue>>>,
    /// How far in under the outermost point the bottom edge sits.
    pub tuck: Option<Spanned<Along<LengthValue>>>,
    /// The edge: soft (0) to hard (1).
    pub edge: Option<Spanned<Along<Edge>>>,
    /// How far in from the edge the deck starts to roll down into the rail.
    pub roll: Option<Spanned<Along<LengthValue>>>,
}

/// Rail family.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RailProfileSpec {
    /// Superelliptic rails.
    #[default]
    Rounded,
    /// Vertical walls, sharp edges.
    Square,
}

/// One bottom contour zone.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ZoneSpec {
    /// flat, vee, single_concave, double_concave.
    pub contour: Spanned<ContourKind>,
    /// Start of the zone.
    pub from: Spanned<Position>,
    /// End of the zone.
    pub to: Spanned<Position>,
    /// Depth (not for flat).
    pub depth: Option<Spanned<LengthValue>>,
    /// Fade-in and fade-out length at each end.
    pub blend: Option<Spanned<LengthValue>>,
    /// Fraction of the half-width the contour spans from the stringer.
    pub span: Option<Spanned<f64>>,
}

/// Why a description could not be read or is not a board.
#[derive(Debug, Clone, PartialEq)]
pub enum DescriptionError {
    /// The file could not be read.
    Io { file: String, message: String },
    /// The YAML is malformed, or a field is unknown, missing or of the
    /// wrong type; `rendered` has the line, column and a source snippet.
    Yaml {
        file: String,
        line: u64,
        column: u64,
        rendered: String,
    },
    /// The fields are readable but the shape breaks a rule.
    Rule(Box<RuleError>),
}

/// A broken shape rule, with where it is.
#[derive(Debug, Clone, PartialEq)]
pub struct RuleError {
    /// The file.
    pub file: String,
    /// Line (1-based), 0 when unknown.
    pub line: u64,
    /// Column (1-based), 0 when unknown.
    pub column: u64,
    /// The field, e.g. `outline.nose_width`.
    pub field: String,
    /// The rule broken.
    pub rule: String,
    /// How to fix it.
    pub hint: String,
    /// The offending source line, when known.
    pub source_line: Option<String>,
}

impl fmt::Display for DescriptionError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DescriptionError::Io { file, message } => write!(f, "{file}: cannot read: {message}"),
            DescriptionError::Yaml { rendered, .. } => f.write_str(rendered.trim_end()),
            DescriptionError::Rule(r) => {
                if r.line > 0 {
                    write!(f, "{}:{}:{}: ", r.file, r.line, r.column)?;
                } else {
                    write!(f, "{}: ", r.file)?;
                }
                write!(f, "{}: {}", r.field, r.rule)?;
                if let Some(src) = &r.source_line {
                    let pad = " ".repeat(r.column.saturating_sub(1) as usize);
                    write!(f, "\n   | {src}\n   | {pad}^")?;
                }
                write!(f, "\n  hint: {}", r.hint)
            }
        }
    }
}

impl std::error::Error for DescriptionError {}

impl DescriptionError {
    /// Line and column, when known.
    pub fn location(&self) -> Option<(u64, u64)> {
        match self {
            DescriptionError::Yaml { line, column, .. } if *line > 0 => Some((*line, *column)),
            DescriptionError::Rule(r) if r.line > 0 => Some((r.line, r.column)),
            _ => None,
        }
    }
}

/// Reads a description's text (`file` names it in messages).
pub fn parse(text: &str, file: &str) -> Result<BoardFile, DescriptionError> {
    read_yaml(text, file)
}

/// A broken rule at a place in a YAML file, for any of the project's files
/// (descriptions, machine and job profiles).
pub fn rule_error(
    text: &str,
    file: &str,
    at: &serde_saphyr::Location,
    field: &str,
    rule: impl Into<String>,
    hint: impl Into<String>,
) -> DescriptionError {
    let (line, column) = (at.line(), at.column());
    let source_line = (line > 0)
        .then(|| text.lines().nth(line as usize - 1).map(str::to_string))
        .flatten();
    DescriptionError::Rule(Box::new(RuleError {
        file: file.to_string(),
        line,
        column,
        field: field.to_string(),
        rule: rule.into(),
        hint: hint.into(),
        source_line,
    }))
}

/// Reads any of the project's YAML files into its raw fields, with the
/// reader's line, column and snippet on failure.
pub fn read_yaml<T: serde::de::DeserializeOwned>(
    text: &str,
    file: &str,
) -> Result<T, DescriptionError> {
    if let Some((line, column, word)) = radix_number(text) {
        let rendered = format!(
            "{file}:{line}:{column}: `{word}` is a number in another base (hexadecimal, octal or binary), which YAML reads as a whole number; write measurements in decimal or as shops do, e.g. 26 or 1 5/8\n"
        );
        return Err(DescriptionError::Yaml {
            file: file.to_string(),
            line,
            column,
            rendered,
        });
    }
    let mut options = serde_saphyr::Options::default();
    options.strict_booleans = true;
    serde_saphyr::from_str_with_options::<T>(text, options).map_err(|e| {
        let (line, column) = e
            .location()
            .map(|l| (l.line(), l.column()))
            .unwrap_or((0, 0));
        let render = serde_saphyr::render_options! { source_name: Some(file) };
        let full = e.render_with_options(render);
        // The reader's first line reads `error: line L column C: message`;
        // lead with `file:L:C: message` instead, and keep its snippet.
        let (first, rest) = full.split_once('\n').unwrap_or((full.as_str(), ""));
        let marker = format!("column {column}: ");
        let message = match first.find(&marker) {
            Some(i) => &first[i + marker.len()..],
            None => first.trim_start_matches("error: "),
        };
        let message = plain_words(message);
        let rendered = if line > 0 {
            format!("{file}:{line}:{column}: {message}\n{rest}")
        } else {
            format!("{file}: {message}\n{rest}")
        };
        DescriptionError::Yaml {
            file: file.to_string(),
            line,
            column,
            rendered,
        }
    })
}

/// The YAML reader's messages that speak of its own settings, in the
/// user's words; any other message is kept as it is.
/// Fields of earlier descriptions and what took their place.
const RENAMED: [(&str, &str); 3] = [
    (
        "tail_block",
        "`tail_block` is now `tail_end_width` (the width across the tail's end)",
    ),
    (
        "softness",
        "rails are now described by `thickness`, `apex`, `tuck`, `edge` and `roll` (see the README)",
    ),
    (
        "tuck",
        "rails are now described by `thickness`, `apex`, `tuck`, `edge` and `roll` (see the README)",
    ),
];

fn plain_words(message: &str) -> String {
    if let Some(rest) = message.strip_prefix("unknown field `")
        && let Some((name, _)) = rest.split_once('`')
        && let Some((_, now)) = RENAMED.iter().find(|(old, _)| *old == name)
    {
        return format!("{message}; {now}");
    }
    if let Some(rest) = message.strip_prefix("duplicate mapping key: ") {
        let key = rest.split(',').next().unwrap_or(rest).trim();
        return format!("`{key}` is given twice here; give each field once");
    }
    if message.contains("multiple YAML documents") {
        return "the file holds more than one YAML document (a `---` line); keep one board a file"
            .into();
    }
    if message.contains("budget breached") {
        return "the file is larger or more deeply nested than any description of this kind; is it the right file?".into();
    }
    if message.contains("rejected by the configured policy") || message.contains("alias") {
        return "anchors and aliases (`&name`, `*name`) are not used in these files; write each value out".into();
    }
    if let Some(kind) = ["u8", "u16", "u32", "u64", "usize"]
        .iter()
        .find(|k| message.starts_with(&format!("invalid {k}")))
    {
        let _ = kind;
        return "expected a whole number, 0 or more".into();
    }
    message.to_string()
}

/// Plain numbers in bases other than ten (`0x1A`, `0o17`, `0b101`), which
/// YAML reads as integers: a length written so is surely a slip.
fn radix_number(text: &str) -> Option<(u64, u64, String)> {
    for (i, line) in text.lines().enumerate() {
        let code = match line.find(" #") {
            Some(k) => &line[..k],
            None if line.trim_start().starts_with('#') => "",
            None => line,
        };
        let mut start = None;
        for (k, c) in code.char_indices().chain([(code.len(), ' ')]) {
            let delimiter = c.is_whitespace() || ":,[]{}".contains(c);
            match (start, delimiter) {
                (None, false) => start = Some(k),
                (Some(s), true) => {
                    let word = code[s..k].trim_start_matches(['+', '-']);
                    let b = word.as_bytes();
                    if b.len() > 2
                        && b[0] == b'0'
                        && matches!(b[1], b'x' | b'X' | b'o' | b'O' | b'b' | b'B')
                        && b[2..].iter().all(|c| c.is_ascii_hexdigit() || *c == b'_')
                    {
                        return Some((i as u64 + 1, s as u64 + 1, code[s..k].to_string()));
                    }
                    start = None;
                }
                _ => {}
            }
        }
    }
    None
}

/// Reads and resolves a description from its text.
pub fn board_from_str(text: &str, file: &str) -> Result<Board, DescriptionError> {
    let raw = parse(text, file)?;
    resolve(&raw, text, file)
}

/// Reads and resolves a description file.
pub fn load(path: &Path) -> Result<Board, DescriptionError> {
    let (text, file) = read_text(path)?;
    board_from_str(&text, &file)
}

/// An input file's text (a description, a profile, a stock list) and its
/// name for messages, read with a size bound.
pub fn read_text(path: &Path) -> Result<(String, String), DescriptionError> {
    let file = path.display().to_string();
    let text = crate::input::read_text(path, crate::input::TEXT_LIMIT).map_err(|message| {
        DescriptionError::Io {
            file: file.clone(),
            message,
        }
    })?;
    Ok((text, file))
}
