//! A small tokenizer for the shorthand that keeps byte positions.

use super::error::PlanErrorKind;
use crate::model::units::parse_clock;

/// Token kinds. Words are stored lowercased by the parser when it needs to compare them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Tok {
    /// `3:00`, `1:02:05`, `4:05.5` (value in seconds).
    Clock(f64),
    /// `12`, `1.5`.
    Number(f64),
    /// `easy`, `km`, `x`, `half_marathon`, `hr` ...
    Word,
    At,
    Semi,
    Comma,
    LParen,
    RParen,
    Slash,
    /// `-` or an en dash, in bands.
    Dash,
    /// `±` or `+-`.
    PlusMinus,
    /// `×`, a synonym of the word `x`.
    Times,
}

/// A token and where it sits in the source (byte offsets).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Token<'a> {
    pub tok: Tok,
    pub start: usize,
    pub text: &'a str,
}

/// A lexing or parsing failure at a byte offset of the parsed text.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct SynErr {
    pub offset: usize,
    pub kind: PlanErrorKind,
}

impl SynErr {
    pub fn invalid(offset: usize, msg: impl Into<String>) -> SynErr {
        SynErr {
            offset,
            kind: PlanErrorKind::Invalid(msg.into()),
        }
    }
}

fn is_word_start(c: char) -> bool {
    c.is_ascii_alphabetic() || c == '_'
}

fn is_word_char(c: char) -> bool {
    c.is_ascii_alphanumeric() || c == '_' || c == '-'
}

/// Split `src` into tokens. Whitespace (including newlines) separates tokens and is otherwise
/// ignored.
pub(crate) fn tokenize(src: &str) -> Result<Vec<Token<'_>>, SynErr> {
    let mut out = Vec::new();
    let mut it = src.char_indices().peekable();
    while let Some(&(start, c)) = it.peek() {
        if c.is_whitespace() {
            it.next();
            continue;
        }
        let single = match c {
            '@' => Some(Tok::At),
            ';' => Some(Tok::Semi),
            ',' => Some(Tok::Comma),
            '(' => Some(Tok::LParen),
            ')' => Some(Tok::RParen),
            '/' => Some(Tok::Slash),
            '-' | '\u{2013}' => Some(Tok::Dash),
            '±' => Some(Tok::PlusMinus),
            '×' => Some(Tok::Times),
            _ => None,
        };
        if let Some(tok) = single {
            it.next();
            let end = start + c.len_utf8();
            out.push(Token {
                tok,
                start,
                text: src.get(start..end).unwrap_or(""),
            });
            continue;
        }
        if c == '+' {
            it.next();
            match it.peek() {
                Some(&(_, '-')) => {
                    it.next();
                    out.push(Token {
                        tok: Tok::PlusMinus,
                        start,
                        text: src.get(start..start + 2).unwrap_or("+-"),
                    });
                    continue;
                }
                _ => {
                    return Err(SynErr {
                        offset: start,
                        kind: PlanErrorKind::Expected {
                            expected: "\"±\" or \"+-\" before a tolerance".into(),
                            found: "\"+\"".into(),
                        },
                    })
                }
            }
        }
        if c.is_ascii_digit() {
            let mut end = start;
            let mut colons = 0;
            let mut dot = false;
            while let Some(&(i, d)) = it.peek() {
                let next_is_digit = src
                    .get(i + 1..)
                    .and_then(|s| s.chars().next())
                    .is_some_and(|n| n.is_ascii_digit());
                if d.is_ascii_digit() {
                    it.next();
                    end = i + 1;
                } else if d == ':' && !dot && next_is_digit {
                    colons += 1;
                    it.next();
                    end = i + 1;
                } else if d == '.' && !dot && next_is_digit {
                    dot = true;
                    it.next();
                    end = i + 1;
                } else {
                    break;
                }
            }
            let text = src.get(start..end).unwrap_or("");
            let tok = if colons > 0 {
                if colons > 2 {
                    return Err(SynErr::invalid(
                        start,
                        format!("\"{text}\" is not a time: use m:ss or h:mm:ss"),
                    ));
                }
                match parse_clock(text) {
                    Some(v) => Tok::Clock(v),
                    None => {
                        return Err(SynErr::invalid(
                            start,
                            format!(
                                "\"{text}\" is not a time: minutes and seconds must be below 60"
                            ),
                        ))
                    }
                }
            } else {
                match text.parse::<f64>() {
                    Ok(v) if v.is_finite() => Tok::Number(v),
                    _ => {
                        return Err(SynErr::invalid(
                            start,
                            format!("\"{text}\" is not a number"),
                        ))
                    }
                }
            };
            out.push(Token { tok, start, text });
            continue;
        }
        if is_word_start(c) {
            it.next();
            let mut end = start + c.len_utf8();
            // `x400m` / `x(`: a lone `x` directly followed by a digit is the repeat sign.
            let x_then_digit =
                (c == 'x' || c == 'X') && it.peek().is_some_and(|&(_, n)| n.is_ascii_digit());
            if !x_then_digit {
                while let Some(&(i, d)) = it.peek() {
                    if is_word_char(d) {
                        it.next();
                        end = i + d.len_utf8();
                    } else {
                        break;
                    }
                }
            }
            out.push(Token {
                tok: Tok::Word,
                start,
                text: src.get(start..end).unwrap_or(""),
            });
            continue;
        }
        return Err(SynErr::invalid(
            start,
            format!("unexpected character {c:?}"),
        ));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds(s: &str) -> Vec<(Tok, &str)> {
        tokenize(s)
            .unwrap_or_default()
            .into_iter()
            .map(|t| (t.tok, t.text))
            .collect()
    }

    #[test]
    fn splits_numbers_units_and_repeat_sign() {
        assert_eq!(
            kinds("5x400m"),
            vec![
                (Tok::Number(5.0), "5"),
                (Tok::Word, "x"),
                (Tok::Number(400.0), "400"),
                (Tok::Word, "m")
            ]
        );
        assert_eq!(
            kinds("4:00-4:10/km"),
            vec![
                (Tok::Clock(240.0), "4:00"),
                (Tok::Dash, "-"),
                (Tok::Clock(250.0), "4:10"),
                (Tok::Slash, "/"),
                (Tok::Word, "km")
            ]
        );
        assert_eq!(
            kinds("half +-5"),
            vec![
                (Tok::Word, "half"),
                (Tok::PlusMinus, "+-"),
                (Tok::Number(5.0), "5")
            ]
        );
        assert_eq!(kinds("1.5km")[0], (Tok::Number(1.5), "1.5"));
    }

    #[test]
    fn rejects_bad_clock() {
        let e = tokenize("3:75").err();
        assert_eq!(e.map(|e| e.offset), Some(0));
    }
}
