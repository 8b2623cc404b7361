//! Typed reads of a located value: strings, numbers, counts, quantities with units,
//! arrays, vectors, directions and tables.

use super::{MAX_LENGTH, Table, Value};
use crate::error::InputError;
use crate::field::Vec3;
use crate::units::{Dimension, dimension_of, parse_quantity};
use toml::de::DeValue;

impl<'a, 'i> Value<'a, 'i> {
    /// The key path of this value.
    pub fn key(&self) -> &str {
        &self.key
    }

    /// An error located at this value.
    pub fn error(&self, reason: impl Into<String>) -> InputError {
        self.doc.error(&self.span, &self.key, reason)
    }

    fn type_error(&self, expected: &str) -> InputError {
        self.error(format!(
            "expected {expected}, found {}",
            describe(self.value)
        ))
    }

    /// A TOML string.
    pub fn string(&self) -> Result<&'a str, InputError> {
        match self.value {
            DeValue::String(s) => Ok(s.as_ref()),
            _ => Err(self.type_error("a string")),
        }
    }

    /// A TOML boolean.
    pub fn boolean(&self) -> Result<bool, InputError> {
        match self.value {
            DeValue::Boolean(b) => Ok(*b),
            _ => Err(self.type_error("true or false")),
        }
    }

    /// A finite number (TOML integer or float), unitless.
    pub fn number(&self) -> Result<f64, InputError> {
        let x = match self.value {
            DeValue::Integer(i) => self.integer(i.as_str(), i.radix())? as f64,
            DeValue::Float(f) => parse_float(f.as_str()),
            _ => return Err(self.type_error("a number")),
        };
        if x.is_finite() {
            Ok(x)
        } else {
            Err(self.error(format!("{} is not a finite number", self.raw())))
        }
    }

    /// A TOML integer's value, refused when it does not fit in 128 bits (such a value
    /// would otherwise lose its sign or magnitude silently).
    fn integer(&self, text: &str, radix: u32) -> Result<i128, InputError> {
        parse_integer(text, radix).ok_or_else(|| {
            self.error(format!(
                "{} is too large for a whole number; write it as a float (e.g. 1e41)",
                self.raw()
            ))
        })
    }

    /// A whole number at least `min`.
    pub fn count(&self, min: i64) -> Result<u64, InputError> {
        let DeValue::Integer(i) = self.value else {
            return Err(self.type_error("a whole number"));
        };
        let n = self.integer(i.as_str(), i.radix())?;
        if n < min as i128 {
            return Err(self.error(format!("must be at least {min}, got {n}")));
        }
        u64::try_from(n).map_err(|_| self.error(format!("{n} is too large")))
    }

    /// A quantity of dimension `dim`: a bare number in SI units or `"<number> <unit>"`.
    /// Lengths beyond [`MAX_LENGTH`] are refused: no scene of strayflux spans them, and
    /// areas and inductances computed from them would overflow.
    pub fn quantity(&self, dim: Dimension) -> Result<f64, InputError> {
        let x = match self.value {
            DeValue::String(s) => parse_quantity(s, dim).map_err(|e| self.error(e.0))?,
            DeValue::Integer(_) | DeValue::Float(_) => {
                let x = self.number()?;
                if let Some(why) = super::plausible::bare_warning(&self.key, dim, x, &self.raw()) {
                    self.doc.warn(&self.span, &self.key, why);
                }
                x
            }
            _ => {
                return Err(self.type_error(&format!(
                    "{} such as {} (or a bare number in SI units)",
                    dim.noun(),
                    dim.example()
                )));
            }
        };
        if dim == Dimension::Length && x.abs() > MAX_LENGTH {
            return Err(self.error(format!(
                "{} is more than 1000 km: strayflux models near fields at the scale of \
                 boards, equipment and rooms",
                self.raw()
            )));
        }
        Ok(x)
    }

    /// A quantity that must be strictly positive.
    /// Sizes (lengths) under 1 nm are refused as well: logarithms and reciprocals of
    /// them overflow in inductances and fields.
    pub fn positive(&self, dim: Dimension) -> Result<f64, InputError> {
        let x = self.quantity(dim)?;
        if dim == Dimension::Length && x > 0.0 && x < 1e-9 {
            return Err(self.error(format!(
                "{} is under 1 nm: too small for a conductor or a loop",
                self.raw()
            )));
        }
        if x > 0.0 {
            Ok(x)
        } else {
            Err(self.error(format!("must be greater than zero, got {}", self.raw())))
        }
    }

    /// The items of a TOML array.
    pub fn array(&self) -> Result<Vec<Value<'a, 'i>>, InputError> {
        let DeValue::Array(items) = self.value else {
            return Err(self.type_error("an array"));
        };
        Ok(items
            .iter()
            .enumerate()
            .map(|(n, v)| Value {
                doc: self.doc,
                key: format!("{}[{}]", self.key, n + 1),
                span: v.span(),
                value: v.get_ref(),
            })
            .collect())
    }

    /// A vector of three quantities of dimension `dim`.
    pub fn vector(&self, dim: Dimension) -> Result<Vec3, InputError> {
        let items = self.array()?;
        if items.len() != 3 {
            return Err(self.error(format!(
                "expected 3 components [x, y, z], found {}",
                items.len()
            )));
        }
        let mut v = Vec3::zeros();
        for (k, item) in items.iter().enumerate() {
            v[k] = item.quantity(dim)?;
        }
        Ok(v)
    }

    /// A unitless direction of three numbers, normalised; the zero vector is an error.
    pub fn direction(&self) -> Result<Vec3, InputError> {
        let items = self.array()?;
        if items.len() != 3 {
            return Err(self.error(format!(
                "expected a direction [x, y, z], found {} components",
                items.len()
            )));
        }
        let mut v = Vec3::zeros();
        for (k, item) in items.iter().enumerate() {
            if matches!(item.value, DeValue::String(_)) {
                return Err(
                    item.error("a direction is unitless: write plain numbers like [0, 0, 1]")
                );
            }
            v[k] = item.number()?;
        }
        let n = v.norm();
        if n == 0.0 || !n.is_finite() {
            return Err(self.error("the zero vector has no direction"));
        }
        Ok(v / n)
    }

    /// A TOML table (inline or standard).
    pub fn table(&self) -> Result<Table<'a, 'i>, InputError> {
        match self.value {
            DeValue::Table(t) => Ok(Table::new(self.doc, self.key.clone(), self.span.clone(), t)),
            _ => Err(self.type_error("a table")),
        }
    }

    /// Whether the value is a table.
    pub fn is_table(&self) -> bool {
        matches!(self.value, DeValue::Table(_))
    }

    /// The value as written, for messages.
    pub fn raw(&self) -> String {
        match self.value {
            DeValue::String(s) => format!("\"{s}\""),
            DeValue::Integer(i) => i.as_str().to_string(),
            DeValue::Float(f) => f.as_str().to_string(),
            other => describe(other).to_string(),
        }
    }

    /// For a string quantity with a unit of another dimension, that dimension.
    pub fn unit_dimension(&self) -> Option<Dimension> {
        let DeValue::String(s) = self.value else {
            return None;
        };
        let sym = s.trim_start_matches(|c: char| c.is_ascii_digit() || "+-.eE ".contains(c));
        dimension_of(sym)
    }
}

fn describe(v: &DeValue<'_>) -> &'static str {
    match v {
        DeValue::String(_) => "a string",
        DeValue::Integer(_) => "an integer",
        DeValue::Float(_) => "a float",
        DeValue::Boolean(_) => "a boolean",
        DeValue::Datetime(_) => "a date-time",
        DeValue::Array(_) => "an array",
        DeValue::Table(_) => "a table",
    }
}

fn parse_integer(text: &str, radix: u32) -> Option<i128> {
    let clean: String = text.chars().filter(|&c| c != '_').collect();
    let (sign, body) = match clean.strip_prefix('-') {
        Some(b) => (-1, b.to_string()),
        None => (1, clean.trim_start_matches('+').to_string()),
    };
    let body = if radix == 10 {
        body.as_str()
    } else {
        body.get(2..).unwrap_or("")
    };
    i128::from_str_radix(body, radix).ok().map(|n| sign * n)
}

fn parse_float(text: &str) -> f64 {
    let clean: String = text.chars().filter(|&c| c != '_').collect();
    clean.parse().unwrap_or(f64::NAN)
}
