//! A serde serializer that writes nothing but visits every number (and every absent
//! optional number) with its path: the first non-finite number is found by name
//! (`lumped.duty_W`, `snapshots[3].hot_C[12]`), and CSV rows are written from their own
//! type's field names and values (see `csv.rs`), so a column list is never kept by hand.
//!
//! Why a serializer: serde_json writes NaN and ±inf as `null`, the same as a missing
//! optional value, so checking the JSON afterwards cannot tell them apart; and converting
//! every value to a JSON tree first costs as much as the solve on large grids. Walking the
//! report's own `Serialize` implementation checks exactly what would be written, once.

use serde::ser::{self, Serialize};

/// Path of the first non-finite number in `value`, or None if every number is finite.
pub fn first_non_finite<T: Serialize + ?Sized>(value: &T, root: &str) -> Option<String> {
    let mut found = None;
    visit(value, root, &mut |path, v| match v {
        Leaf::Real(Some(x)) if !x.is_finite() => {
            found = Some(path.concat());
            false
        }
        _ => true,
    });
    found
}

/// Call `f` with the path (segments like `root`, `.field`, `[3]`) and value of every
/// number in `value`, and with None for every absent optional; `f` returns false to stop.
/// Text and booleans are not visited.
/// Whole numbers (indices, counts) are visited as `Leaf::Whole`, so a CSV can write them as
/// integers.
pub fn visit<T: Serialize + ?Sized>(value: &T, root: &str, f: &mut dyn FnMut(&[String], Leaf) -> bool) {
    let mut walker = Walker { path: vec![root.to_string()], visit: f };
    let _ = value.serialize(&mut walker);
}

/// A number the walk meets.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Leaf {
    /// A floating-point value (None: an absent optional).
    Real(Option<f64>),
    /// A whole number.
    Whole(i128),
}

struct Walker<'v> {
    path: Vec<String>,
    visit: &'v mut dyn FnMut(&[String], Leaf) -> bool,
}

/// Raised to stop the walk at the first bad number.
#[derive(Debug)]
struct Stop;

impl std::fmt::Display for Stop {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("non-finite number")
    }
}
impl std::error::Error for Stop {}
impl ser::Error for Stop {
    fn custom<T: std::fmt::Display>(_: T) -> Self {
        Stop
    }
}

impl Walker<'_> {
    fn leaf(&mut self, v: Option<f64>) -> Result<(), Stop> {
        self.any_leaf(Leaf::Real(v))
    }
    fn whole(&mut self, v: i128) -> Result<(), Stop> {
        self.any_leaf(Leaf::Whole(v))
    }
    fn any_leaf(&mut self, v: Leaf) -> Result<(), Stop> {
        if (self.visit)(&self.path, v) {
            Ok(())
        } else {
            Err(Stop)
        }
    }
    fn nested<T: Serialize + ?Sized>(&mut self, label: String, v: &T) -> Result<(), Stop> {
        self.path.push(label);
        let r = v.serialize(&mut *self);
        self.path.pop();
        r
    }
}

/// Sequences and maps count their elements to name them.
struct Compound<'a, 'v> {
    walker: &'a mut Walker<'v>,
    index: usize,
}

macro_rules! ignore {
    ($($name:ident($ty:ty)),* $(,)?) => {
        $(fn $name(self, _: $ty) -> Result<(), Stop> { Ok(()) })*
    };
}

impl<'a, 'v> ser::Serializer for &'a mut Walker<'v> {
    type Ok = ();
    type Error = Stop;
    type SerializeSeq = Compound<'a, 'v>;
    type SerializeTuple = Compound<'a, 'v>;
    type SerializeTupleStruct = Compound<'a, 'v>;
    type SerializeTupleVariant = Compound<'a, 'v>;
    type SerializeMap = Compound<'a, 'v>;
    type SerializeStruct = Compound<'a, 'v>;
    type SerializeStructVariant = Compound<'a, 'v>;

    ignore!(serialize_bool(bool), serialize_char(char), serialize_str(&str), serialize_bytes(&[u8]),);
    fn serialize_i64(self, v: i64) -> Result<(), Stop> {
        self.whole(v as i128)
    }
    fn serialize_u64(self, v: u64) -> Result<(), Stop> {
        self.whole(v as i128)
    }
    fn serialize_i32(self, v: i32) -> Result<(), Stop> {
        self.whole(v as i128)
    }
    fn serialize_u32(self, v: u32) -> Result<(), Stop> {
        self.whole(v as i128)
    }
    fn serialize_i16(self, v: i16) -> Result<(), Stop> {
        self.whole(v as i128)
    }
    fn serialize_u16(self, v: u16) -> Result<(), Stop> {
        self.whole(v as i128)
    }
    fn serialize_i8(self, v: i8) -> Result<(), Stop> {
        self.whole(v as i128)
    }
    fn serialize_u8(self, v: u8) -> Result<(), Stop> {
        self.whole(v as i128)
    }
    fn serialize_f32(self, v: f32) -> Result<(), Stop> {
        self.leaf(Some(v as f64))
    }
    fn serialize_f64(self, v: f64) -> Result<(), Stop> {
        self.leaf(Some(v))
    }
    fn serialize_none(self) -> Result<(), Stop> {
        self.leaf(None)
    }
    fn serialize_some<T: Serialize + ?Sized>(self, v: &T) -> Result<(), Stop> {
        v.serialize(self)
    }
    fn serialize_unit(self) -> Result<(), Stop> {
        Ok(())
    }
    fn serialize_unit_struct(self, _: &'static str) -> Result<(), Stop> {
        Ok(())
    }
    fn serialize_unit_variant(self, _: &'static str, _: u32, _: &'static str) -> Result<(), Stop> {
        Ok(())
    }
    fn serialize_newtype_struct<T: Serialize + ?Sized>(self, _: &'static str, v: &T) -> Result<(), Stop> {
        v.serialize(self)
    }
    fn serialize_newtype_variant<T: Serialize + ?Sized>(self, _: &'static str, _: u32, variant: &'static str, v: &T) -> Result<(), Stop> {
        self.nested(format!(".{variant}"), v)
    }
    fn serialize_seq(self, _: Option<usize>) -> Result<Compound<'a, 'v>, Stop> {
        Ok(Compound { walker: self, index: 0 })
    }
    fn serialize_tuple(self, _: usize) -> Result<Compound<'a, 'v>, Stop> {
        Ok(Compound { walker: self, index: 0 })
    }
    fn serialize_tuple_struct(self, _: &'static str, _: usize) -> Result<Compound<'a, 'v>, Stop> {
        Ok(Compound { walker: self, index: 0 })
    }
    fn serialize_tuple_variant(self, _: &'static str, _: u32, _: &'static str, _: usize) -> Result<Compound<'a, 'v>, Stop> {
        Ok(Compound { walker: self, index: 0 })
    }
    fn serialize_map(self, _: Option<usize>) -> Result<Compound<'a, 'v>, Stop> {
        Ok(Compound { walker: self, index: 0 })
    }
    fn serialize_struct(self, _: &'static str, _: usize) -> Result<Compound<'a, 'v>, Stop> {
        Ok(Compound { walker: self, index: 0 })
    }
    fn serialize_struct_variant(self, _: &'static str, _: u32, _: &'static str, _: usize) -> Result<Compound<'a, 'v>, Stop> {
        Ok(Compound { walker: self, index: 0 })
    }
}

impl Compound<'_, '_> {
    fn element<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Stop> {
        let label = format!("[{}]", self.index);
        self.index += 1;
        self.walker.nested(label, v)
    }
    fn field<T: Serialize + ?Sized>(&mut self, key: &str, v: &T) -> Result<(), Stop> {
        self.walker.nested(format!(".{key}"), v)
    }
}

macro_rules! sequence {
    ($($tr:ident :: $method:ident),* $(,)?) => {
        $(impl ser::$tr for Compound<'_, '_> {
            type Ok = ();
            type Error = Stop;
            fn $method<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Stop> {
                self.element(v)
            }
            fn end(self) -> Result<(), Stop> {
                Ok(())
            }
        })*
    };
}
sequence!(SerializeSeq::serialize_element, SerializeTuple::serialize_element, SerializeTupleStruct::serialize_field, SerializeTupleVariant::serialize_field);

macro_rules! record {
    ($($tr:ident),* $(,)?) => {
        $(impl ser::$tr for Compound<'_, '_> {
            type Ok = ();
            type Error = Stop;
            fn serialize_field<T: Serialize + ?Sized>(&mut self, key: &'static str, v: &T) -> Result<(), Stop> {
                self.field(key, v)
            }
            fn end(self) -> Result<(), Stop> {
                Ok(())
            }
        })*
    };
}
record!(SerializeStruct, SerializeStructVariant);

impl ser::SerializeMap for Compound<'_, '_> {
    type Ok = ();
    type Error = Stop;
    fn serialize_key<T: Serialize + ?Sized>(&mut self, _: &T) -> Result<(), Stop> {
        Ok(())
    }
    fn serialize_value<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Stop> {
        self.element(v)
    }
    fn end(self) -> Result<(), Stop> {
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::first_non_finite;

    #[derive(serde::Serialize)]
    struct Inner {
        a: f64,
        b: Option<f64>,
        list: Vec<f64>,
    }
    #[derive(serde::Serialize)]
    struct Outer {
        name: String,
        inner: Inner,
    }

    #[test]
    fn finds_the_first_non_finite_number_by_path_and_accepts_none() {
        let ok = Outer { name: "x".into(), inner: Inner { a: 1.0, b: None, list: vec![1.0, 2.0] } };
        assert_eq!(first_non_finite(&ok, "summary"), None);
        let bad = Outer { name: "x".into(), inner: Inner { a: 1.0, b: Some(2.0), list: vec![1.0, f64::INFINITY] } };
        assert_eq!(first_non_finite(&bad, "summary").as_deref(), Some("summary.inner.list[1]"));
        let nan = Outer { name: "x".into(), inner: Inner { a: 1.0, b: Some(f64::NAN), list: vec![] } };
        assert_eq!(first_non_finite(&nan, "summary").as_deref(), Some("summary.inner.b"));
    }
}
