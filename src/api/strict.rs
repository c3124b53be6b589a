//! The strict reading of params: a JSON value as a serde deserializer that refuses a JSON
//! array where an object with named fields is expected, at any depth.
//!
//! serde's derived `Deserialize` of a struct also accepts a sequence of the fields' values in
//! declaration order, so `"given": [3e6, 300]` would silently become p = 3e6 and T = 300.
//! [`Strict`] wraps `serde_json::Value` and answers every struct request (and every internally
//! tagged enum, which serde reads through `deserialize_any`) made on an array with an error
//! naming the cause; everything else it forwards to `Value` unchanged, wrapping the elements
//! of arrays and the values of objects so that the rule holds all the way down. `decode_params`
//! runs every method's params through it, so the rule needs no per-type code.
//!
//! Units: none (wire shapes only).
//!
//! Invariant: a params value that contains no array where a struct is read decodes to exactly
//! what `serde_json::from_value` gives (the scalar paths are `Value`'s own).

use serde::de::{
    self, DeserializeSeed, Deserializer, IntoDeserializer, MapAccess, SeqAccess, Visitor,
};
use serde_json::{Map, Value};
use std::fmt;

/// The message of the refusal.
pub const ARRAY_FOR_OBJECT: &str = "an array where an object with named fields is expected: name each value, e.g. {\"p\": \"30 bar\", \"T\": \"300 degC\"} rather than [30, 300] (values are never read by position)";

/// A JSON value read strictly (see the module doc).
pub struct Strict(pub Value);

fn refuse<E: de::Error>() -> E {
    E::custom(ARRAY_FOR_OBJECT)
}

/// Whether a visitor handed to `deserialize_any` is serde's reader of an internally tagged
/// enum, which would otherwise take a sequence (tag first) as a struct.
fn wants_named_fields<'de, V: Visitor<'de>>(v: &V) -> bool {
    struct Expecting<'a, V>(&'a V);
    impl<'de, V: Visitor<'de>> fmt::Display for Expecting<'_, V> {
        fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
            self.0.expecting(f)
        }
    }
    let what = Expecting(v).to_string();
    what.starts_with("internally tagged enum") || what.starts_with("struct ")
}

struct Seq(std::vec::IntoIter<Value>);

impl<'de> SeqAccess<'de> for Seq {
    type Error = serde_json::Error;
    fn next_element_seed<T: DeserializeSeed<'de>>(
        &mut self,
        seed: T,
    ) -> Result<Option<T::Value>, Self::Error> {
        match self.0.next() {
            Some(v) => seed.deserialize(Strict(v)).map(Some),
            None => Ok(None),
        }
    }
    fn size_hint(&self) -> Option<usize> {
        Some(self.0.len())
    }
}

struct Obj {
    iter: serde_json::map::IntoIter,
    value: Option<Value>,
}

impl<'de> MapAccess<'de> for Obj {
    type Error = serde_json::Error;
    fn next_key_seed<K: DeserializeSeed<'de>>(
        &mut self,
        seed: K,
    ) -> Result<Option<K::Value>, Self::Error> {
        match self.iter.next() {
            Some((k, v)) => {
                self.value = Some(v);
                seed.deserialize(k.into_deserializer()).map(Some)
            }
            None => Ok(None),
        }
    }
    fn next_value_seed<V: DeserializeSeed<'de>>(
        &mut self,
        seed: V,
    ) -> Result<V::Value, Self::Error> {
        match self.value.take() {
            Some(v) => seed.deserialize(Strict(v)),
            None => Err(de::Error::custom("a value is missing after its key")),
        }
    }
    fn size_hint(&self) -> Option<usize> {
        Some(self.iter.len())
    }
}

fn visit_object<'de, V: Visitor<'de>>(
    m: Map<String, Value>,
    v: V,
) -> Result<V::Value, serde_json::Error> {
    v.visit_map(Obj {
        iter: m.into_iter(),
        value: None,
    })
}

macro_rules! forward_to_value {
    ($($method:ident)*) => {
        $(
            fn $method<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Self::Error> {
                self.0.$method(v)
            }
        )*
    };
}

impl<'de> Deserializer<'de> for Strict {
    type Error = serde_json::Error;

    fn deserialize_any<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Self::Error> {
        match self.0 {
            Value::Array(a) => {
                if wants_named_fields(&v) {
                    return Err(refuse());
                }
                v.visit_seq(Seq(a.into_iter()))
            }
            Value::Object(m) => visit_object(m, v),
            other => other.deserialize_any(v),
        }
    }

    fn deserialize_struct<V: Visitor<'de>>(
        self,
        name: &'static str,
        fields: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, Self::Error> {
        match self.0 {
            Value::Array(_) => Err(refuse()),
            Value::Object(m) => visit_object(m, v),
            other => other.deserialize_struct(name, fields, v),
        }
    }

    fn deserialize_map<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Self::Error> {
        match self.0 {
            Value::Object(m) => visit_object(m, v),
            other => other.deserialize_map(v),
        }
    }

    fn deserialize_seq<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Self::Error> {
        match self.0 {
            Value::Array(a) => v.visit_seq(Seq(a.into_iter())),
            other => other.deserialize_seq(v),
        }
    }

    fn deserialize_tuple<V: Visitor<'de>>(self, len: usize, v: V) -> Result<V::Value, Self::Error> {
        match self.0 {
            Value::Array(a) => v.visit_seq(Seq(a.into_iter())),
            other => other.deserialize_tuple(len, v),
        }
    }

    fn deserialize_tuple_struct<V: Visitor<'de>>(
        self,
        name: &'static str,
        len: usize,
        v: V,
    ) -> Result<V::Value, Self::Error> {
        match self.0 {
            Value::Array(a) => v.visit_seq(Seq(a.into_iter())),
            other => other.deserialize_tuple_struct(name, len, v),
        }
    }

    fn deserialize_option<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Self::Error> {
        match self.0 {
            Value::Null => v.visit_none(),
            other => v.visit_some(Strict(other)),
        }
    }

    fn deserialize_newtype_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        v: V,
    ) -> Result<V::Value, Self::Error> {
        v.visit_newtype_struct(self)
    }

    fn deserialize_enum<V: Visitor<'de>>(
        self,
        name: &'static str,
        variants: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, Self::Error> {
        // Externally tagged enums: the params use none with struct variants (unit variants
        // are names); `Value`'s own reading applies.
        self.0.deserialize_enum(name, variants, v)
    }

    fn deserialize_unit_struct<V: Visitor<'de>>(
        self,
        name: &'static str,
        v: V,
    ) -> Result<V::Value, Self::Error> {
        self.0.deserialize_unit_struct(name, v)
    }

    forward_to_value! {
        deserialize_bool deserialize_i8 deserialize_i16 deserialize_i32 deserialize_i64
        deserialize_i128 deserialize_u8 deserialize_u16 deserialize_u32 deserialize_u64
        deserialize_u128 deserialize_f32 deserialize_f64 deserialize_char deserialize_str
        deserialize_string deserialize_bytes deserialize_byte_buf deserialize_unit
        deserialize_identifier deserialize_ignored_any
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde::Deserialize;

    #[derive(Debug, Deserialize, PartialEq)]
    #[serde(deny_unknown_fields)]
    struct Pair {
        p: f64,
        #[serde(rename = "T")]
        t: f64,
    }

    #[derive(Debug, Deserialize, PartialEq)]
    #[serde(deny_unknown_fields)]
    struct Outer {
        given: Pair,
        #[serde(default)]
        list: Vec<Pair>,
        #[serde(default)]
        numbers: Vec<f64>,
        #[serde(default)]
        maybe: Option<Pair>,
    }

    #[derive(Debug, Deserialize, PartialEq)]
    #[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
    enum Tagged {
        Valve { p: f64 },
    }

    fn read<T: serde::de::DeserializeOwned>(v: Value) -> Result<T, serde_json::Error> {
        T::deserialize(Strict(v))
    }

    #[test]
    fn objects_read_as_before() {
        let v = serde_json::json!({"given": {"p": 3.0, "T": 300.0}, "list": [{"p": 1.0, "T": 2.0}], "numbers": [1, 2.5], "maybe": null});
        let a: Outer = read(v.clone()).unwrap();
        let b: Outer = serde_json::from_value(v).unwrap();
        assert_eq!(a, b);
        let t: Tagged = read(serde_json::json!({"kind": "valve", "p": 1.0})).unwrap();
        assert_eq!(t, Tagged::Valve { p: 1.0 });
    }

    /// serde alone reads [3e6, 300] as p = 3e6, T = 300; the strict reading refuses it, at the
    /// top, nested, inside a list, inside an option and for an internally tagged enum.
    #[test]
    fn an_array_for_a_struct_is_refused_at_any_depth() {
        let plain: Pair = serde_json::from_value(serde_json::json!([3e6, 300])).unwrap();
        assert_eq!(plain, Pair { p: 3e6, t: 300.0 });
        for v in [
            serde_json::json!({"given": [3e6, 300]}),
            serde_json::json!({"given": {"p": 1, "T": 2}, "list": [[1, 2]]}),
            serde_json::json!({"given": {"p": 1, "T": 2}, "maybe": [1, 2]}),
        ] {
            let e = read::<Outer>(v).unwrap_err().to_string();
            assert!(e.contains("an array where an object"), "{e}");
        }
        let e = read::<Tagged>(serde_json::json!(["valve", 1.0])).unwrap_err();
        assert!(e.to_string().contains("an array where an object"), "{e}");
    }
}
