//! STL reader: binary or ASCII, told apart by size and content rather than
//! by the word `solid` alone (binary headers often begin with it, and some
//! ASCII files have nothing after it). Malformed input is an error with the
//! facet or the line, never a panic; nothing is allocated from a header's
//! count before the file's size confirms it.

use std::path::Path;

use crate::meshing::mesher::MAX_TRIANGLES;

/// Which flavour a file was.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum StlFormat {
    /// Binary STL.
    Binary,
    /// ASCII STL.
    Ascii,
}

/// A triangle soup as read: three corners a facet, in file order.
#[derive(Debug, Clone, PartialEq)]
pub struct Soup {
    /// The facets' corners (normals are not kept: they follow from the winding).
    pub triangles: Vec<[[f32; 3]; 3]>,
    /// Binary or ASCII.
    pub format: StlFormat,
}

/// Why an STL file could not be read.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum StlError {
    /// The file is empty or too short for either flavour.
    #[error("not an STL file: {0}")]
    NotStl(String),
    /// A binary file shorter than its facet count says.
    #[error(
        "truncated binary STL: the header says {claimed} triangles ({needed} bytes) but the file has {len} bytes"
    )]
    Truncated { claimed: u32, needed: u64, len: u64 },
    /// A binary file longer than its facet count says.
    #[error(
        "binary STL with {extra} bytes after the {claimed} triangles its header counts; the file is damaged or mislabelled"
    )]
    ExtraBytes { claimed: u32, extra: u64 },
    /// A coordinate is NaN or infinite.
    #[error("{at}: a coordinate is not a finite number")]
    NotFinite { at: String },
    /// ASCII text that breaks the grammar.
    #[error("line {line}, column {column}: {message}")]
    Ascii {
        line: usize,
        column: usize,
        message: String,
    },
    /// More triangles than the tool takes.
    #[error("the file holds {count} triangles, over the limit of {limit}")]
    TooLarge { count: u64, limit: usize },
    /// The file could not be read.
    #[error("cannot read: {0}")]
    Io(String),
}

/// Largest ASCII STL read, bytes (at about 260 bytes a facet, some two
/// million triangles; a binary file is read in chunks and has no such bound).
pub const ASCII_LIMIT: u64 = 512 << 20;

/// Reads STL from bytes.
pub fn read(bytes: &[u8]) -> Result<Soup, StlError> {
    let len = bytes.len() as u64;
    if bytes.len() >= 84 {
        let claimed = u32::from_le_bytes(bytes[80..84].try_into().expect("4 bytes"));
        let needed = 84 + 50 * claimed as u64;
        if needed == len {
            return read_binary(bytes, claimed);
        }
        if !looks_ascii(bytes) {
            return Err(if needed > len {
                StlError::Truncated {
                    claimed,
                    needed,
                    len,
                }
            } else {
                StlError::ExtraBytes {
                    claimed,
                    extra: len - needed,
                }
            });
        }
    }
    if looks_ascii(bytes) {
        return read_ascii(bytes);
    }
    Err(StlError::NotStl(if bytes.is_empty() {
        "the file is empty".to_string()
    } else {
        format!(
            "{len} bytes: too short for binary STL (at least 84) and not ASCII STL (which starts with `solid`)"
        )
    }))
}

/// Reads an STL file. A binary file whose size matches its header is read
/// facet by facet in chunks, without holding the whole file in memory.
pub fn read_file(path: &Path) -> Result<Soup, StlError> {
    use std::io::Read;
    let io = |e: std::io::Error| StlError::Io(e.to_string());
    let mut file = std::fs::File::open(path).map_err(io)?;
    let meta = file.metadata().map_err(io)?;
    if meta.is_dir() {
        return Err(StlError::Io("is a folder, not a file".into()));
    }
    // The size is known for a regular file; a device or pipe is read
    // only as far as its first bytes show it to be text.
    let len = meta.is_file().then_some(meta.len());
    let mut head = Vec::with_capacity(84);
    (&mut file).take(84).read_to_end(&mut head).map_err(io)?;
    if head.len() == 84 && !looks_ascii(&head) {
        let claimed = u32::from_le_bytes(head[80..84].try_into().expect("4 bytes"));
        let needed = 84 + 50 * claimed as u64;
        let Some(len) = len else {
            return Err(StlError::NotStl(
                "not a regular file, and not ASCII STL (which starts with `solid`)".into(),
            ));
        };
        if needed > len {
            return Err(StlError::Truncated {
                claimed,
                needed,
                len,
            });
        }
        if needed < len {
            return Err(StlError::ExtraBytes {
                claimed,
                extra: len - needed,
            });
        }
        if claimed as usize > MAX_TRIANGLES {
            return Err(StlError::TooLarge {
                count: claimed as u64,
                limit: MAX_TRIANGLES,
            });
        }
        let mut triangles = Vec::with_capacity(claimed as usize);
        let mut chunk = vec![0u8; 50 * 20_000];
        let mut left = claimed as usize;
        while left > 0 {
            let n = left.min(20_000);
            file.read_exact(&mut chunk[..50 * n]).map_err(io)?;
            parse_facets(&chunk[..50 * n], triangles.len(), &mut triangles)?;
            left -= n;
        }
        return Ok(Soup {
            triangles,
            format: StlFormat::Binary,
        });
    }
    // Text (or too short for binary): read whole, up to a bound.
    if let Some(len) = len
        && len > ASCII_LIMIT
    {
        return Err(StlError::Io(format!(
            "the file is {len} bytes; ASCII STL is read up to {ASCII_LIMIT} bytes (about 2 million triangles): save it as binary STL"
        )));
    }
    let mut bytes = head;
    file.take(ASCII_LIMIT + 1 - bytes.len() as u64)
        .read_to_end(&mut bytes)
        .map_err(io)?;
    if bytes.len() as u64 > ASCII_LIMIT {
        return Err(StlError::Io(format!(
            "the file runs past {ASCII_LIMIT} bytes, the most read of ASCII STL (about 2 million triangles): save it as binary STL"
        )));
    }
    read(&bytes)
}

/// Parses 50-byte facets, numbering them from `first` in messages.
fn parse_facets(bytes: &[u8], first: usize, out: &mut Vec<[[f32; 3]; 3]>) -> Result<(), StlError> {
    for (i, facet) in bytes.chunks_exact(50).enumerate() {
        let f = |k: usize| {
            f32::from_le_bytes(facet[12 + 4 * k..16 + 4 * k].try_into().expect("4 bytes"))
        };
        let t = [[f(0), f(1), f(2)], [f(3), f(4), f(5)], [f(6), f(7), f(8)]];
        if t.iter().flatten().any(|v| !v.is_finite()) {
            return Err(StlError::NotFinite {
                at: format!("facet {}", first + i + 1),
            });
        }
        out.push(t);
    }
    Ok(())
}

fn looks_ascii(bytes: &[u8]) -> bool {
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let start = bytes
        .iter()
        .position(|b| !b.is_ascii_whitespace())
        .unwrap_or(bytes.len());
    let head = &bytes[start..bytes.len().min(start + 5)];
    // Text cut short inside a character at the end of the sample is text.
    head.eq_ignore_ascii_case(b"solid")
        && match std::str::from_utf8(&bytes[..bytes.len().min(4096)]) {
            Ok(_) => true,
            Err(e) => e.error_len().is_none(),
        }
}

fn read_binary(bytes: &[u8], count: u32) -> Result<Soup, StlError> {
    if count as usize > MAX_TRIANGLES {
        return Err(StlError::TooLarge {
            count: count as u64,
            limit: MAX_TRIANGLES,
        });
    }
    let mut triangles = Vec::with_capacity(count as usize);
    parse_facets(&bytes[84..], 0, &mut triangles)?;
    Ok(Soup {
        triangles,
        format: StlFormat::Binary,
    })
}

struct Lines<'a> {
    lines: std::iter::Enumerate<std::str::Lines<'a>>,
    line: usize,
    column: usize,
}

impl<'a> Lines<'a> {
    /// The next non-blank line's words, with its number.
    fn next_words(&mut self) -> Option<Vec<&'a str>> {
        for (i, l) in self.lines.by_ref() {
            let words: Vec<&str> = l.split_whitespace().collect();
            if !words.is_empty() {
                self.line = i + 1;
                self.column = 1 + l.len() - l.trim_start().len();
                return Some(words);
            }
        }
        None
    }

    fn fail<T>(&self, message: impl Into<String>) -> Result<T, StlError> {
        Err(StlError::Ascii {
            line: self.line,
            column: self.column,
            message: message.into(),
        })
    }

    /// Expects a line whose first words are `want`.
    fn expect(&mut self, want: &[&str]) -> Result<Vec<&'a str>, StlError> {
        let Some(words) = self.next_words() else {
            self.line += 1;
            return self.fail(format!(
                "the file ends where `{}` was expected",
                want.join(" ")
            ));
        };
        let ok = words.len() >= want.len()
            && want
                .iter()
                .zip(&words)
                .all(|(w, x)| x.eq_ignore_ascii_case(w));
        if !ok {
            return self.fail(format!(
                "expected `{}`, found `{}`",
                want.join(" "),
                words.join(" ")
            ));
        }
        Ok(words)
    }

    fn numbers(&self, words: &[&str], skip: usize) -> Result<[f32; 3], StlError> {
        if words.len() != skip + 3 {
            return self.fail(format!(
                "expected three numbers after `{}`",
                words[..skip].join(" ")
            ));
        }
        let mut out = [0.0f32; 3];
        for (k, w) in words[skip..].iter().enumerate() {
            let v: f32 = w
                .parse()
                .or_else(|_| self.fail(format!("`{w}` is not a number")))?;
            if !v.is_finite() {
                return Err(StlError::NotFinite {
                    at: format!("line {}", self.line),
                });
            }
            out[k] = v;
        }
        Ok(out)
    }
}

fn read_ascii(bytes: &[u8]) -> Result<Soup, StlError> {
    let text = std::str::from_utf8(bytes).map_err(|e| StlError::Ascii {
        line: 1 + bytes[..e.valid_up_to()]
            .iter()
            .filter(|&&b| b == b'\n')
            .count(),
        column: 1 + bytes[..e.valid_up_to()]
            .iter()
            .rev()
            .take_while(|&&b| b != b'\n')
            .count(),
        message: "not text (invalid UTF-8); is this a damaged binary STL?".to_string(),
    })?;
    // A byte-order mark, and lines ended by CR alone (old Mac editors), are
    // text all the same.
    let text = text.strip_prefix('\u{FEFF}').unwrap_or(text);
    let text: std::borrow::Cow<str> = if text.contains('\r') {
        text.replace("\r\n", "\n").replace('\r', "\n").into()
    } else {
        text.into()
    };
    let mut lines = Lines {
        lines: text.lines().enumerate(),
        line: 0,
        column: 0,
    };
    let mut triangles = Vec::new();
    lines.expect(&["solid"])?;
    loop {
        let Some(words) = lines.next_words() else {
            lines.line += 1;
            lines.column = 1;
            return lines.fail("the file ends without `endsolid`");
        };
        let head = words[0].to_ascii_lowercase();
        match head.as_str() {
            "endsolid" => {
                // Another solid may follow; anything else is junk.
                match lines.next_words() {
                    None => break,
                    Some(w) if w[0].eq_ignore_ascii_case("solid") => continue,
                    Some(w) => {
                        return lines.fail(format!(
                            "expected the end of the file or `solid`, found `{}`",
                            w.join(" ")
                        ));
                    }
                }
            }
            "facet" => {
                if words.len() < 2 || !words[1].eq_ignore_ascii_case("normal") {
                    return lines.fail(format!(
                        "expected `facet normal`, found `{}`",
                        words.join(" ")
                    ));
                }
                lines.numbers(&words, 2)?;
                lines.expect(&["outer", "loop"])?;
                let mut t = [[0.0f32; 3]; 3];
                for corner in &mut t {
                    let w = lines.expect(&["vertex"])?;
                    *corner = lines.numbers(&w, 1)?;
                }
                lines.expect(&["endloop"])?;
                lines.expect(&["endfacet"])?;
                if triangles.len() >= MAX_TRIANGLES {
                    return Err(StlError::TooLarge {
                        count: triangles.len() as u64 + 1,
                        limit: MAX_TRIANGLES,
                    });
                }
                triangles.push(t);
            }
            _ => {
                return lines.fail(format!(
                    "expected `facet` or `endsolid`, found `{}`",
                    words.join(" ")
                ));
            }
        }
    }
    Ok(Soup {
        triangles,
        format: StlFormat::Ascii,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const ONE: &str = "solid t\n facet normal 0 0 1\n  outer loop\n   vertex 0 0 0\n   vertex 1 0 0\n   vertex 0 1 0\n  endloop\n endfacet\nendsolid t\n";

    fn binary(n_claimed: u32, facets: usize, header: &[u8]) -> Vec<u8> {
        let mut b = vec![b' '; 80];
        b[..header.len()].copy_from_slice(header);
        b.extend_from_slice(&n_claimed.to_le_bytes());
        for _ in 0..facets {
            b.extend_from_slice(&[0u8; 12]);
            for v in [0.0f32, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0] {
                b.extend_from_slice(&v.to_le_bytes());
            }
            b.extend_from_slice(&[0, 0]);
        }
        b
    }

    #[test]
    fn binary_whose_header_says_solid_is_binary() {
        let s = read(&binary(2, 2, b"solid exported")).unwrap();
        assert_eq!((s.format, s.triangles.len()), (StlFormat::Binary, 2));
    }

    #[test]
    fn ascii_with_a_bare_solid_line_is_ascii() {
        let text = ONE
            .replace("solid t\n", "solid\n")
            .replace("endsolid t", "endsolid");
        let s = read(text.as_bytes()).unwrap();
        assert_eq!((s.format, s.triangles.len()), (StlFormat::Ascii, 1));
        assert_eq!(s.triangles[0][1], [1.0, 0.0, 0.0]);
    }

    #[test]
    fn bad_files_are_errors() {
        assert!(matches!(read(b""), Err(StlError::NotStl(_))));
        assert!(matches!(
            read(&binary(3, 2, b"x")),
            Err(StlError::Truncated { claimed: 3, .. })
        ));
        assert!(matches!(
            read(&binary(u32::MAX, 1, b"x")),
            Err(StlError::Truncated { .. })
        ));
        assert!(matches!(
            read(&binary(1, 2, b"x")),
            Err(StlError::ExtraBytes {
                claimed: 1,
                extra: 50
            })
        ));
        let mut nan = binary(1, 1, b"x");
        nan[84 + 12..84 + 16].copy_from_slice(&f32::NAN.to_le_bytes());
        assert!(matches!(read(&nan), Err(StlError::NotFinite { .. })));
        let no_endloop = ONE.replace("  endloop\n", "");
        assert_eq!(
            read(no_endloop.as_bytes()),
            Err(StlError::Ascii {
                line: 7,
                column: 2,
                message: "expected `endloop`, found `endfacet`".into()
            })
        );
        let junk = ONE.replace("endsolid t", "garbage here");
        assert!(matches!(
            read(junk.as_bytes()),
            Err(StlError::Ascii { line: 9, .. })
        ));
        let inf = ONE.replace("vertex 1 0 0", "vertex inf 0 0");
        assert!(matches!(
            read(inf.as_bytes()),
            Err(StlError::NotFinite { .. })
        ));
        let cut = &ONE[..40];
        assert!(matches!(read(cut.as_bytes()), Err(StlError::Ascii { .. })));
    }
}
