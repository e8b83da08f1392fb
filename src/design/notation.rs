//! Stack notation: a short way to type a layer stack.
//!
//! The text lists layers in deposition order, substrate side first, like the layer table.
//! Each layer is a one-letter symbol that the caller binds to a material (for example `H` to a
//! high-index and `L` to a low-index material); letters are case-sensitive.
//!
//! ```text
//! stack     = { item } ;
//! item      = layer | group ;
//! layer     = [ number ] symbol              (* quarter waves at λref; no number = 1 *)
//!           | symbol ":" number "nm" ;       (* physical thickness *)
//! group     = "(" item { item } ")" [ "^" count ] ;   (* repeated count times; none = 1 *)
//! symbol    = "A" … "Z" | "a" … "z" ;
//! number    = digits [ "." [ digits ] ] | "." digits ;   (* > 0 *)
//! count     = digits ;                       (* whole, >= 1 *)
//! ```
//!
//! Whitespace may go anywhere between tokens. Examples: `HL` (two quarter-wave layers),
//! `2H 0.5L`, `L:85nm H`, `(HL)^7 H`, `((HL)^2 2L)^3`. Adjacent layers of the same material
//! stay separate layers, as written. A multiple `m` of a symbol bound to a material of index
//! n = Re N(λref) gives d = m·λref/(4n).
//!
//! ```
//! use std::collections::BTreeMap;
//! use stackwise::design::notation::build_layers;
//! use stackwise::material::{Catalog, Material, Model};
//! let mats = [
//!     Material::user("High", Model::Constant { n: 2.5, k: 0.0 }),
//!     Material::user("Low", Model::Constant { n: 1.25, k: 0.0 }),
//! ];
//! let bind = BTreeMap::from([('H', "High".to_owned()), ('L', "Low".to_owned())]);
//! let layers = build_layers("(HL)^2 L:10nm", &bind, &Catalog::new(&mats), 500.0)?;
//! assert_eq!(layers.len(), 5);
//! assert_eq!(layers[0].nm.get(), 50.0); // 500 / (4 · 2.5)
//! assert_eq!(layers[1].nm.get(), 100.0); // 500 / (4 · 1.25)
//! assert_eq!(layers[4].nm.get(), 10.0);
//! # Ok::<(), stackwise::design::notation::NotationError>(())
//! ```

use std::collections::BTreeMap;

use crate::material::{Catalog, MaterialError};

use super::{Layer, Nm};

/// Most layers a notation may expand to.
pub const MAX_LAYERS: usize = 10_000;

/// Deepest nesting of groups.
pub const MAX_DEPTH: usize = 32;

/// How thick a layer written in notation is.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Thickness {
    /// A number of quarter waves at the reference wavelength (`2H` is 2).
    QuarterWaves(f64),
    /// A physical thickness in nanometres (`H:85nm`).
    Nm(f64),
}

/// One parsed piece of notation.
#[derive(Clone, Debug, PartialEq)]
pub enum Item {
    /// A single layer.
    Layer {
        /// The symbol, to be bound to a material.
        symbol: char,
        /// Its thickness.
        thickness: Thickness,
        /// 1-based column of the symbol in the text.
        column: usize,
    },
    /// A parenthesised group, repeated.
    Group {
        /// What is inside the parentheses.
        items: Vec<Item>,
        /// How many times it is repeated (>= 1).
        repeat: u32,
        /// 1-based column of the `(`.
        column: usize,
    },
}

/// A problem in stack notation; every variant names the 1-based column (in characters).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum NotationError {
    /// A character that cannot start or continue anything here.
    #[error("column {column}: unexpected {found:?}; {hint}")]
    Unexpected {
        /// Where.
        column: usize,
        /// The character.
        found: char,
        /// What would fit here.
        hint: &'static str,
    },
    /// A `)` with no `(` before it.
    #[error("column {column}: `)` has no matching `(`; remove it or add a `(` before it")]
    StrayClose {
        /// Where.
        column: usize,
    },
    /// A `(` never closed.
    #[error("column {column}: `(` is never closed; add a `)`")]
    Unclosed {
        /// Where the `(` is.
        column: usize,
    },
    /// `()` with nothing inside.
    #[error("column {column}: the group `()` is empty; put layers inside or remove it")]
    EmptyGroup {
        /// Where the `(` is.
        column: usize,
    },
    /// Groups nested too deeply.
    #[error("column {column}: groups are nested more than {MAX_DEPTH} deep")]
    TooDeep {
        /// Where the `(` that goes too deep is.
        column: usize,
    },
    /// A number that cannot be used.
    #[error("column {column}: {text:?} is not a usable number: {why}")]
    BadNumber {
        /// Where the number starts.
        column: usize,
        /// The number as written.
        text: String,
        /// Why it is rejected.
        why: &'static str,
    },
    /// A repeat count that is not a whole number >= 1.
    #[error(
        "column {column}: repeat count {text:?} must be a whole number of 1 or more, \
         as in `(HL)^4`"
    )]
    BadRepeat {
        /// Where the count starts.
        column: usize,
        /// The count as written (empty if missing).
        text: String,
    },
    /// A number with no symbol after it.
    #[error(
        "column {column}: a multiple must be followed by a layer symbol, as in `2H`; \
         to repeat a group write `(HL)^2`"
    )]
    MissingSymbol {
        /// Where the symbol should be.
        column: usize,
    },
    /// Both a multiple and a physical thickness on one layer.
    #[error("column {column}: a layer takes a multiple (`2H`) or a thickness (`H:85nm`), not both")]
    MultipleAndThickness {
        /// Where the `:` is.
        column: usize,
    },
    /// A physical thickness without its unit.
    #[error("column {column}: write the unit after the thickness, as in `H:85nm`")]
    MissingUnit {
        /// Where the unit should be.
        column: usize,
    },
    /// The expanded stack is too long.
    #[error("column {column}: the stack would have more than {MAX_LAYERS} layers")]
    TooManyLayers {
        /// Where the item that crosses the limit starts.
        column: usize,
    },
    /// A symbol with no material bound to it.
    #[error("column {column}: unknown symbol `{symbol}`; {bound}")]
    UnknownSymbol {
        /// Where.
        column: usize,
        /// The symbol.
        symbol: char,
        /// The bound symbols, in words.
        bound: String,
    },
    /// The material bound to a symbol cannot be found or evaluated at the reference wavelength.
    #[error("column {column}: symbol `{symbol}` is bound to {material:?}: {source}")]
    Material {
        /// Where the symbol is first used.
        column: usize,
        /// The symbol.
        symbol: char,
        /// The material it is bound to.
        material: String,
        /// What went wrong.
        source: MaterialError,
    },
    /// A quarter-wave multiple needs a usable reference wavelength.
    #[error(
        "column {column}: a quarter-wave multiple needs a reference wavelength, but \
         reference_nm is {value_nm}; set it to a positive number of nanometres"
    )]
    BadReference {
        /// Where the first multiple is.
        column: usize,
        /// The unusable reference wavelength.
        value_nm: f64,
    },
}

struct Parser {
    chars: Vec<char>,
    pos: usize,
}

impl Parser {
    fn column(&self) -> usize {
        self.pos + 1
    }

    fn peek(&self) -> Option<char> {
        self.chars.get(self.pos).copied()
    }

    fn skip_ws(&mut self) {
        while self.peek().is_some_and(char::is_whitespace) {
            self.pos += 1;
        }
    }

    fn take_while(&mut self, f: impl Fn(char) -> bool) -> String {
        let start = self.pos;
        while self.peek().is_some_and(&f) {
            self.pos += 1;
        }
        self.chars[start..self.pos].iter().collect()
    }

    /// Items up to the end (top level) or up to the `)` closing the group opened at `open`.
    /// Returns the items and how many layers they expand to (at most [`MAX_LAYERS`]).
    fn sequence(
        &mut self,
        open: Option<usize>,
        depth: usize,
    ) -> Result<(Vec<Item>, usize), NotationError> {
        let mut items = Vec::new();
        let mut count = 0usize;
        loop {
            self.skip_ws();
            let column = self.column();
            let Some(c) = self.peek() else {
                return match open {
                    Some(column) => Err(NotationError::Unclosed { column }),
                    None => Ok((items, count)),
                };
            };
            let (item, n) = match c {
                ')' if open.is_some() => return Ok((items, count)),
                ')' => return Err(NotationError::StrayClose { column }),
                '(' => self.group(depth)?,
                c if c.is_ascii_digit() || c == '.' || c.is_ascii_alphabetic() => {
                    (self.layer()?, 1)
                }
                found => {
                    let hint = match found {
                        '-' | '+' => "multiples and thicknesses are positive numbers",
                        '^' => "`^` repeats a group, as in `(HL)^3`",
                        ':' => "`:` follows a symbol, as in `L:85nm`",
                        _ => "expected a layer such as `H`, `2H` or `L:85nm`, or a group `(HL)^3`",
                    };
                    return Err(NotationError::Unexpected {
                        column,
                        found,
                        hint,
                    });
                }
            };
            count += n;
            if count > MAX_LAYERS {
                return Err(NotationError::TooManyLayers { column });
            }
            items.push(item);
        }
    }

    fn group(&mut self, depth: usize) -> Result<(Item, usize), NotationError> {
        let column = self.column();
        if depth >= MAX_DEPTH {
            return Err(NotationError::TooDeep { column });
        }
        self.pos += 1; // '('
        let (items, inner) = self.sequence(Some(column), depth + 1)?;
        self.pos += 1; // ')', checked by `sequence`
        if items.is_empty() {
            return Err(NotationError::EmptyGroup { column });
        }
        self.skip_ws();
        let mut repeat = 1;
        if self.peek() == Some('^') {
            self.pos += 1;
            self.skip_ws();
            let at = self.column();
            let text = self.take_while(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+'));
            repeat = match text.parse::<u32>() {
                Ok(n) if n >= 1 && !text.starts_with('+') => n,
                _ => return Err(NotationError::BadRepeat { column: at, text }),
            };
        }
        let total = inner.saturating_mul(repeat as usize);
        if total > MAX_LAYERS {
            return Err(NotationError::TooManyLayers { column });
        }
        Ok((
            Item::Group {
                items,
                repeat,
                column,
            },
            total,
        ))
    }

    fn number(&mut self) -> Result<f64, NotationError> {
        let column = self.column();
        let text = self.take_while(|c| c.is_ascii_digit() || c == '.');
        let bad = |why| NotationError::BadNumber {
            column,
            text: text.clone(),
            why,
        };
        let Ok(x) = text.parse::<f64>() else {
            return Err(bad(
                "write digits with at most one decimal point, as in 0.5",
            ));
        };
        if !x.is_finite() {
            return Err(bad("it is too large"));
        }
        if x <= 0.0 {
            return Err(bad(
                "a layer must be thicker than zero; leave the layer out instead",
            ));
        }
        Ok(x)
    }

    fn layer(&mut self) -> Result<Item, NotationError> {
        let multiple = match self.peek() {
            Some(c) if c.is_ascii_digit() || c == '.' => {
                let m = self.number()?;
                self.skip_ws();
                Some(m)
            }
            _ => None,
        };
        let column = self.column();
        let Some(symbol) = self.peek().filter(char::is_ascii_alphabetic) else {
            return Err(NotationError::MissingSymbol { column });
        };
        self.pos += 1;
        self.skip_ws();
        if self.peek() != Some(':') {
            let thickness = Thickness::QuarterWaves(multiple.unwrap_or(1.0));
            return Ok(Item::Layer {
                symbol,
                thickness,
                column,
            });
        }
        if multiple.is_some() {
            return Err(NotationError::MultipleAndThickness {
                column: self.column(),
            });
        }
        self.pos += 1; // ':'
        self.skip_ws();
        if !self.peek().is_some_and(|c| c.is_ascii_digit() || c == '.') {
            return Err(NotationError::BadNumber {
                column: self.column(),
                text: String::new(),
                why: "a thickness in nanometres must follow `:`, as in `L:85nm`",
            });
        }
        let nm = self.number()?;
        self.skip_ws();
        if self.chars.get(self.pos..self.pos + 2) != Some(&['n', 'm']) {
            return Err(NotationError::MissingUnit {
                column: self.column(),
            });
        }
        self.pos += 2;
        Ok(Item::Layer {
            symbol,
            thickness: Thickness::Nm(nm),
            column,
        })
    }
}

/// Parses stack notation (see the module doc for the grammar) without binding symbols.
///
/// ```
/// use stackwise::design::notation::{parse, Item, Thickness};
/// let items = parse("2H")?;
/// assert_eq!(items, [Item::Layer { symbol: 'H', thickness: Thickness::QuarterWaves(2.0), column: 2 }]);
/// assert_eq!(parse("(HL)^0").unwrap_err().to_string(),
///            "column 6: repeat count \"0\" must be a whole number of 1 or more, as in `(HL)^4`");
/// # Ok::<(), stackwise::design::notation::NotationError>(())
/// ```
pub fn parse(text: &str) -> Result<Vec<Item>, NotationError> {
    let mut p = Parser {
        chars: text.chars().collect(),
        pos: 0,
    };
    Ok(p.sequence(None, 0)?.0)
}

/// Calls `f` for each layer of the expanded stack, substrate side first.
fn expand<E>(
    items: &[Item],
    f: &mut impl FnMut(char, Thickness, usize) -> Result<(), E>,
) -> Result<(), E> {
    for item in items {
        match item {
            Item::Layer {
                symbol,
                thickness,
                column,
            } => f(*symbol, *thickness, *column)?,
            Item::Group { items, repeat, .. } => {
                for _ in 0..*repeat {
                    expand(items, f)?;
                }
            }
        }
    }
    Ok(())
}

/// Parses `text` and turns it into layers: each symbol is looked up in `bindings`, its
/// material in `catalog`, and a multiple m becomes d = m·λref/(4n) with n = Re N(λref).
pub fn build_layers(
    text: &str,
    bindings: &BTreeMap<char, String>,
    catalog: &Catalog<'_>,
    reference_nm: f64,
) -> Result<Vec<Layer>, NotationError> {
    let items = parse(text)?;
    // n at λref for each symbol, evaluated once.
    let mut index: BTreeMap<char, f64> = BTreeMap::new();
    let mut layers = Vec::new();
    expand(&items, &mut |symbol, thickness, column| {
        let Some(material) = bindings.get(&symbol) else {
            let bound = if bindings.is_empty() {
                "no symbols are bound to materials yet".to_owned()
            } else {
                let names: Vec<String> = bindings
                    .iter()
                    .map(|(s, m)| format!("{s} = {m:?}"))
                    .collect();
                format!("bound symbols: {}", names.join(", "))
            };
            return Err(NotationError::UnknownSymbol {
                column,
                symbol,
                bound,
            });
        };
        let fail = |source| NotationError::Material {
            column,
            symbol,
            material: material.clone(),
            source,
        };
        let d = match thickness {
            Thickness::Nm(d) => d,
            Thickness::QuarterWaves(m) => {
                let n = if let Some(n) = index.get(&symbol) {
                    *n
                } else {
                    if !(reference_nm.is_finite() && reference_nm > 0.0) {
                        return Err(NotationError::BadReference {
                            column,
                            value_nm: reference_nm,
                        });
                    }
                    let n = catalog
                        .get(material)
                        .and_then(|m| m.index_at(reference_nm))
                        .map_err(fail)?
                        .re;
                    index.insert(symbol, n);
                    n
                };
                m * reference_nm / (4.0 * n)
            }
        };
        let nm = Nm::new(d).map_err(|_| NotationError::BadNumber {
            column,
            text: format!("{d}"),
            why: "the layer comes out thicker than a number can hold",
        })?;
        layers.push(Layer::new(material, nm));
        Ok(())
    })?;
    Ok(layers)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::{Material, Model};
    use approx::assert_relative_eq;

    fn mats() -> Vec<Material> {
        vec![
            Material::user("Low", Model::Constant { n: 1.38, k: 0.0 }),
            Material::user("High", Model::Constant { n: 2.35, k: 0.0 }),
            Material::user("Bad", Model::Constant { n: -1.0, k: 0.0 }),
        ]
    }

    fn bind() -> BTreeMap<char, String> {
        BTreeMap::from([
            ('H', "High".into()),
            ('L', "Low".into()),
            ('X', "Bad".into()),
        ])
    }

    fn build(text: &str) -> Result<Vec<Layer>, NotationError> {
        let m = mats();
        build_layers(text, &bind(), &Catalog::new(&m), 550.0)
    }

    fn err(text: &str) -> String {
        build(text).unwrap_err().to_string()
    }

    #[test]
    fn quarter_wave_multiples_and_physical_thickness() {
        let l = build("L 2H 0.5L H:85nm .25 L").unwrap();
        let nm: Vec<f64> = l.iter().map(|l| l.nm.get()).collect();
        let names: Vec<&str> = l.iter().map(|l| l.material.as_str()).collect();
        assert_eq!(
            names,
            ["Low", "High", "Low", "High", "Low"],
            "materials in order"
        );
        // Quarter wave d = λ0/(4n): 550/(4·1.38) = 99.637681… nm; 550/(4·2.35) = 58.510638… nm.
        assert_relative_eq!(nm[0], 99.637_681_159_420_3, epsilon = 1e-9);
        assert_relative_eq!(nm[1], 2.0 * 58.510_638_297_872_34, epsilon = 1e-9);
        assert_relative_eq!(nm[2], 0.5 * 99.637_681_159_420_3, epsilon = 1e-9);
        assert_relative_eq!(nm[3], 85.0, epsilon = 0.0);
        assert_relative_eq!(nm[4], 0.25 * 99.637_681_159_420_3, epsilon = 1e-9);
    }

    #[test]
    fn groups_repeat_and_nest_in_deposition_order() {
        let l = build(" ( H L ) ^ 3 ((H)^2 L)^2 ").unwrap();
        let s: String = l
            .iter()
            .map(|l| if l.material == "High" { 'H' } else { 'L' })
            .collect();
        assert_eq!(s, "HLHLHLHHLHHL", "expanded order");
        assert!(
            build("").unwrap().is_empty(),
            "empty text is a bare substrate"
        );
        assert_eq!(
            build("HL").unwrap().len(),
            2,
            "no spaces needed between symbols"
        );
        assert_eq!(
            build("(HL)").unwrap().len(),
            2,
            "a group without ^ counts once"
        );
    }

    #[test]
    fn bad_inputs_name_the_column() {
        let cases = [
            ("HL)", "column 3: `)` has no matching `(`"),
            ("H (HL", "column 3: `(` is never closed"),
            ("H () L", "column 3: the group `()` is empty"),
            (
                "HQL",
                "column 2: unknown symbol `Q`; bound symbols: H = \"High\"",
            ),
            ("1.2.3H", "column 1: \"1.2.3\" is not a usable number"),
            (
                "0H",
                "column 1: \"0\" is not a usable number: a layer must be thicker than zero",
            ),
            ("(HL)^0", "column 6: repeat count \"0\""),
            ("(HL)^-2", "column 6: repeat count \"-2\""),
            ("(HL)^2.5", "column 6: repeat count \"2.5\""),
            ("(HL)^", "column 6: repeat count \"\""),
            ("(HL)^99999999999", "column 6: repeat count \"99999999999\""),
            ("H L #", "column 5: unexpected '#'"),
            (
                "H -L",
                "column 3: unexpected '-'; multiples and thicknesses are positive",
            ),
            ("H^2", "column 2: unexpected '^'; `^` repeats a group"),
            (
                "2(HL)",
                "column 2: a multiple must be followed by a layer symbol",
            ),
            (
                "H 3",
                "column 4: a multiple must be followed by a layer symbol",
            ),
            ("2L:85nm", "column 3: a layer takes a multiple"),
            ("L:85", "column 5: write the unit"),
            ("L:85um", "column 5: write the unit"),
            ("L:", "column 3: \"\" is not a usable number"),
            ("L:0nm", "column 3: \"0\" is not a usable number"),
            (
                "H X",
                "column 3: symbol `X` is bound to \"Bad\": material \"Bad\" gives no usable",
            ),
            ("Hé", "column 2: unexpected 'é'"),
            (
                "(HL)^6000",
                "column 1: the stack would have more than 10000 layers",
            ),
            (
                "((((HL)^100)^100)^100)^100",
                "column 3: the stack would have more than",
            ),
        ];
        for (text, want) in cases {
            let got = err(text);
            assert!(
                got.starts_with(want),
                "{text:?}: got {got:?}, want {want:?}"
            );
        }
        let deep = format!("{}H{}", "(".repeat(100), ")".repeat(100));
        assert!(
            err(&deep).starts_with("column 33: groups are nested"),
            "{}",
            err(&deep)
        );
        let e = build_layers("H", &BTreeMap::new(), &Catalog::new(&[]), 550.0).unwrap_err();
        assert!(e.to_string().contains("no symbols are bound"), "{e}");
    }

    #[test]
    fn unknown_bound_material_and_bad_reference_are_errors() {
        let b = BTreeMap::from([('H', "Nowhere".to_owned())]);
        let e = build_layers("H", &b, &Catalog::new(&mats()), 550.0)
            .unwrap_err()
            .to_string();
        assert!(e.contains("unknown material \"Nowhere\""), "{e}");
        let e = build_layers("H", &bind(), &Catalog::new(&mats()), -5.0)
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("column 1: a quarter-wave multiple needs a reference"),
            "{e}"
        );
        let l = build_layers("H:5nm", &bind(), &Catalog::new(&mats()), -5.0).unwrap();
        assert_relative_eq!(l[0].nm.get(), 5.0, epsilon = 0.0);
    }

    proptest::proptest! {
        #[test]
        fn any_text_gives_layers_or_an_error_with_a_column(text in "[HLXQ()^:.0-9nm #é-]{0,40}") {
            match build(&text) {
                Ok(layers) => proptest::prop_assert!(layers.iter().all(|l| l.nm.get() > 0.0)),
                Err(e) => {
                    let msg = e.to_string();
                    let col: usize = msg
                        .strip_prefix("column ")
                        .and_then(|r| r.split(':').next())
                        .and_then(|c| c.parse().ok())
                        .unwrap_or(0);
                    proptest::prop_assert!(
                        (1..=text.chars().count() + 1).contains(&col),
                        "{text:?}: {msg}"
                    );
                }
            }
        }
    }
}
