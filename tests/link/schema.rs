//! Every key path of the case format, found from the case types themselves: a serde deserializer
//! that answers every struct with all of its fields, every `Option` with a value, every list
//! with one item and every enum with its first variant, so the resulting case holds every key
//! the format knows, including optional groups a test author may not know about yet.

use std::collections::BTreeSet;

use serde::de::value::{Error, StrDeserializer};
use serde::de::{self, Deserializer, IntoDeserializer, Visitor};
use serde::Deserialize;
use serde_json::Value;

use finwake::Case;

/// Every key path of the case format (`foils.*.chord`, `numerics.time_step`, ...), with `*` for
/// list indices; objects that hold nothing are listed by their own path.
pub fn every_path() -> BTreeSet<String> {
    let case = Case::deserialize(Full).expect("the case types deserialise from Full");
    let tree = serde_json::to_value(&case).unwrap();
    let mut out = BTreeSet::new();
    walk(&tree, String::new(), &mut out);
    out
}

fn walk(v: &Value, path: String, out: &mut BTreeSet<String>) {
    let join = |k: &str| {
        if path.is_empty() {
            k.to_string()
        } else {
            format!("{path}.{k}")
        }
    };
    match v {
        Value::Object(m) if m.is_empty() && !path.is_empty() => {
            out.insert(path);
        }
        Value::Object(m) => {
            for (k, v) in m {
                walk(v, join(k), out);
            }
        }
        Value::Array(a) => {
            for v in a {
                walk(v, join("*"), out);
            }
        }
        _ => {
            out.insert(path);
        }
    }
}

/// The deserializer that fills everything.
struct Full;

impl<'de> Deserializer<'de> for Full {
    type Error = Error;

    fn deserialize_any<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Error> {
        v.visit_u64(1)
    }
    fn deserialize_bool<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Error> {
        v.visit_bool(false)
    }
    fn deserialize_f32<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Error> {
        v.visit_f64(1.0)
    }
    fn deserialize_f64<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Error> {
        v.visit_f64(1.0)
    }
    fn deserialize_str<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Error> {
        v.visit_str("x")
    }
    fn deserialize_string<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Error> {
        v.visit_str("x")
    }
    fn deserialize_option<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Error> {
        v.visit_some(Full)
    }
    fn deserialize_seq<V: Visitor<'de>>(self, v: V) -> Result<V::Value, Error> {
        v.visit_seq(Items(1))
    }
    fn deserialize_struct<V: Visitor<'de>>(
        self,
        _name: &'static str,
        fields: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, Error> {
        v.visit_map(Fields { fields, at: 0 })
    }
    fn deserialize_enum<V: Visitor<'de>>(
        self,
        _name: &'static str,
        variants: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, Error> {
        let first: StrDeserializer<Error> = variants[0].into_deserializer();
        v.visit_enum(first)
    }

    serde::forward_to_deserialize_any! {
        i8 i16 i32 i64 i128 u8 u16 u32 u64 u128 char bytes byte_buf unit unit_struct
        newtype_struct tuple tuple_struct map identifier ignored_any
    }
}

struct Items(usize);

impl<'de> de::SeqAccess<'de> for Items {
    type Error = Error;
    fn next_element_seed<T: de::DeserializeSeed<'de>>(
        &mut self,
        seed: T,
    ) -> Result<Option<T::Value>, Error> {
        if self.0 == 0 {
            return Ok(None);
        }
        self.0 -= 1;
        seed.deserialize(Full).map(Some)
    }
}

struct Fields {
    fields: &'static [&'static str],
    at: usize,
}

impl<'de> de::MapAccess<'de> for Fields {
    type Error = Error;
    fn next_key_seed<K: de::DeserializeSeed<'de>>(
        &mut self,
        seed: K,
    ) -> Result<Option<K::Value>, Error> {
        let Some(name) = self.fields.get(self.at) else {
            return Ok(None);
        };
        self.at += 1;
        let key: StrDeserializer<Error> = name.into_deserializer();
        seed.deserialize(key).map(Some)
    }
    fn next_value_seed<V: de::DeserializeSeed<'de>>(&mut self, seed: V) -> Result<V::Value, Error> {
        seed.deserialize(Full)
    }
}
