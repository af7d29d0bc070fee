//! [`super::output::shape`]'s rules applied while the body is written, in
//! one streaming pass, instead of through a `serde_json::Value` tree (which
//! cost a large share of writing a squad summary or plan):
//!
//! - a `source` member whose value is a string that is not one of the
//!   document's enum labels is written as `source_id` (its place in the
//!   response's source table); the table is written last in the top-level
//!   object as `sources`, when anything was cited;
//! - with a zone, every string value that is a local date-time gets the
//!   zone's offset on its date.
//!
//! Members come out in the order the types declare them (the value tree
//! sorted them by name); JSON objects are unordered, and a test checks the
//! two paths give equal documents.

use std::cell::RefCell;
use std::collections::HashSet;

use serde::ser::{self, Serialize, Serializer};

use super::output::{SOURCE_FIELD, SOURCE_ID_FIELD, SOURCES_FIELD, Sources, with_offset};

/// What the pass carries: the sources met so far and the rules' inputs.
pub(super) struct Shaping<'a> {
    pub sources: RefCell<Sources>,
    pub zone: Option<&'a chrono_tz::Tz>,
    pub labels: &'a HashSet<String>,
}

/// The source table's entries.
#[derive(serde::Serialize)]
struct SourceEntry<'t> {
    id: usize,
    text: &'t str,
}

/// The sources met, as the top-level `sources` list.
struct SourceTable<'s>(&'s RefCell<Sources>);

impl Serialize for SourceTable<'_> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_seq(
            self.0
                .borrow()
                .texts
                .iter()
                .enumerate()
                .map(|(id, text)| SourceEntry { id, text }),
        )
    }
}

/// A serializer that applies the rules and hands everything to `inner`.
pub(super) struct Shaper<'s, 'a, S> {
    pub inner: S,
    pub shaping: &'s Shaping<'a>,
    /// The top-level value: its object gets the source table.
    pub root: bool,
}

/// A value written through a [`Shaper`] (a compound's member).
struct Shaped<'v, 's, 'a, T: ?Sized> {
    value: &'v T,
    shaping: &'s Shaping<'a>,
}

impl<T: Serialize + ?Sized> Serialize for Shaped<'_, '_, '_, T> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        self.value.serialize(Shaper {
            inner: serializer,
            shaping: self.shaping,
            root: false,
        })
    }
}

impl<'s, 'a> Shaping<'a> {
    fn wrap<'v, T: ?Sized>(&'s self, value: &'v T) -> Shaped<'v, 's, 'a, T> {
        Shaped {
            value,
            shaping: self,
        }
    }

    /// The source id of `value` if it is a citation (a string that is not
    /// an enum label).
    fn citation<T: Serialize + ?Sized>(&self, value: &T) -> Option<usize> {
        let text = as_string(value)?;
        if self.labels.contains(&text) {
            return None;
        }
        Some(self.sources.borrow_mut().id(text))
    }
}

/// Compounds of a [`Shaper`]: members go through the rules; the root
/// object ends with the source table.
pub(super) struct Compound<'s, 'a, C> {
    inner: C,
    shaping: &'s Shaping<'a>,
    root: bool,
    /// A map key held back until its value is seen (it may be `source`).
    pending_key: Option<String>,
}

impl<'s, 'a, C> Compound<'s, 'a, C> {
    fn new(inner: C, shaping: &'s Shaping<'a>, root: bool) -> Self {
        Self {
            inner,
            shaping,
            root,
            pending_key: None,
        }
    }

    /// The source table, at the end of the top-level object, if anything
    /// was cited.
    fn table(&self) -> Option<SourceTable<'s>> {
        let sources = &self.shaping.sources;
        (self.root && !sources.borrow().texts.is_empty()).then_some(SourceTable(sources))
    }
}

impl<'s, 'a, S: Serializer> Serializer for Shaper<'s, 'a, S> {
    type Ok = S::Ok;
    type Error = S::Error;
    type SerializeSeq = Compound<'s, 'a, S::SerializeSeq>;
    type SerializeTuple = Compound<'s, 'a, S::SerializeTuple>;
    type SerializeTupleStruct = Compound<'s, 'a, S::SerializeTupleStruct>;
    type SerializeTupleVariant = Compound<'s, 'a, S::SerializeTupleVariant>;
    type SerializeMap = Compound<'s, 'a, S::SerializeMap>;
    type SerializeStruct = Compound<'s, 'a, S::SerializeStruct>;
    type SerializeStructVariant = Compound<'s, 'a, S::SerializeStructVariant>;

    fn serialize_bool(self, v: bool) -> Result<S::Ok, S::Error> {
        self.inner.serialize_bool(v)
    }
    fn serialize_i8(self, v: i8) -> Result<S::Ok, S::Error> {
        self.inner.serialize_i8(v)
    }
    fn serialize_i16(self, v: i16) -> Result<S::Ok, S::Error> {
        self.inner.serialize_i16(v)
    }
    fn serialize_i32(self, v: i32) -> Result<S::Ok, S::Error> {
        self.inner.serialize_i32(v)
    }
    fn serialize_i64(self, v: i64) -> Result<S::Ok, S::Error> {
        self.inner.serialize_i64(v)
    }
    fn serialize_i128(self, v: i128) -> Result<S::Ok, S::Error> {
        self.inner.serialize_i128(v)
    }
    fn serialize_u8(self, v: u8) -> Result<S::Ok, S::Error> {
        self.inner.serialize_u8(v)
    }
    fn serialize_u16(self, v: u16) -> Result<S::Ok, S::Error> {
        self.inner.serialize_u16(v)
    }
    fn serialize_u32(self, v: u32) -> Result<S::Ok, S::Error> {
        self.inner.serialize_u32(v)
    }
    fn serialize_u64(self, v: u64) -> Result<S::Ok, S::Error> {
        self.inner.serialize_u64(v)
    }
    fn serialize_u128(self, v: u128) -> Result<S::Ok, S::Error> {
        self.inner.serialize_u128(v)
    }
    fn serialize_f32(self, v: f32) -> Result<S::Ok, S::Error> {
        self.inner.serialize_f32(v)
    }
    fn serialize_f64(self, v: f64) -> Result<S::Ok, S::Error> {
        self.inner.serialize_f64(v)
    }
    fn serialize_char(self, v: char) -> Result<S::Ok, S::Error> {
        self.inner.serialize_char(v)
    }
    fn serialize_str(self, v: &str) -> Result<S::Ok, S::Error> {
        if let Some(zone) = self.shaping.zone
            && let Some(placed) = with_offset(v, zone)
        {
            return self.inner.serialize_str(&placed);
        }
        self.inner.serialize_str(v)
    }
    fn serialize_bytes(self, v: &[u8]) -> Result<S::Ok, S::Error> {
        self.inner.serialize_bytes(v)
    }
    fn serialize_none(self) -> Result<S::Ok, S::Error> {
        self.inner.serialize_none()
    }
    fn serialize_some<T: Serialize + ?Sized>(self, value: &T) -> Result<S::Ok, S::Error> {
        self.inner.serialize_some(&self.shaping.wrap(value))
    }
    fn serialize_unit(self) -> Result<S::Ok, S::Error> {
        self.inner.serialize_unit()
    }
    fn serialize_unit_struct(self, name: &'static str) -> Result<S::Ok, S::Error> {
        self.inner.serialize_unit_struct(name)
    }
    fn serialize_unit_variant(
        self,
        name: &'static str,
        index: u32,
        variant: &'static str,
    ) -> Result<S::Ok, S::Error> {
        self.inner.serialize_unit_variant(name, index, variant)
    }
    fn serialize_newtype_struct<T: Serialize + ?Sized>(
        self,
        name: &'static str,
        value: &T,
    ) -> Result<S::Ok, S::Error> {
        // Transparent in JSON: the value stays the root if it was.
        let _ = name;
        value.serialize(Shaper {
            inner: self.inner,
            shaping: self.shaping,
            root: self.root,
        })
    }
    fn serialize_newtype_variant<T: Serialize + ?Sized>(
        self,
        name: &'static str,
        index: u32,
        variant: &'static str,
        value: &T,
    ) -> Result<S::Ok, S::Error> {
        self.inner
            .serialize_newtype_variant(name, index, variant, &self.shaping.wrap(value))
    }
    fn serialize_seq(self, len: Option<usize>) -> Result<Self::SerializeSeq, S::Error> {
        Ok(Compound::new(
            self.inner.serialize_seq(len)?,
            self.shaping,
            false,
        ))
    }
    fn serialize_tuple(self, len: usize) -> Result<Self::SerializeTuple, S::Error> {
        Ok(Compound::new(
            self.inner.serialize_tuple(len)?,
            self.shaping,
            false,
        ))
    }
    fn serialize_tuple_struct(
        self,
        name: &'static str,
        len: usize,
    ) -> Result<Self::SerializeTupleStruct, S::Error> {
        Ok(Compound::new(
            self.inner.serialize_tuple_struct(name, len)?,
            self.shaping,
            false,
        ))
    }
    fn serialize_tuple_variant(
        self,
        name: &'static str,
        index: u32,
        variant: &'static str,
        len: usize,
    ) -> Result<Self::SerializeTupleVariant, S::Error> {
        Ok(Compound::new(
            self.inner
                .serialize_tuple_variant(name, index, variant, len)?,
            self.shaping,
            false,
        ))
    }
    fn serialize_map(self, len: Option<usize>) -> Result<Self::SerializeMap, S::Error> {
        // One more member at the root: the source table.
        let len = if self.root { None } else { len };
        Ok(Compound::new(
            self.inner.serialize_map(len)?,
            self.shaping,
            self.root,
        ))
    }
    fn serialize_struct(
        self,
        name: &'static str,
        len: usize,
    ) -> Result<Self::SerializeStruct, S::Error> {
        Ok(Compound::new(
            self.inner
                .serialize_struct(name, len + usize::from(self.root))?,
            self.shaping,
            self.root,
        ))
    }
    fn serialize_struct_variant(
        self,
        name: &'static str,
        index: u32,
        variant: &'static str,
        len: usize,
    ) -> Result<Self::SerializeStructVariant, S::Error> {
        Ok(Compound::new(
            self.inner
                .serialize_struct_variant(name, index, variant, len)?,
            self.shaping,
            false,
        ))
    }
}

impl<C: ser::SerializeSeq> ser::SerializeSeq for Compound<'_, '_, C> {
    type Ok = C::Ok;
    type Error = C::Error;
    fn serialize_element<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), C::Error> {
        self.inner.serialize_element(&self.shaping.wrap(value))
    }
    fn end(self) -> Result<C::Ok, C::Error> {
        self.inner.end()
    }
}

impl<C: ser::SerializeTuple> ser::SerializeTuple for Compound<'_, '_, C> {
    type Ok = C::Ok;
    type Error = C::Error;
    fn serialize_element<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), C::Error> {
        self.inner.serialize_element(&self.shaping.wrap(value))
    }
    fn end(self) -> Result<C::Ok, C::Error> {
        self.inner.end()
    }
}

impl<C: ser::SerializeTupleStruct> ser::SerializeTupleStruct for Compound<'_, '_, C> {
    type Ok = C::Ok;
    type Error = C::Error;
    fn serialize_field<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), C::Error> {
        self.inner.serialize_field(&self.shaping.wrap(value))
    }
    fn end(self) -> Result<C::Ok, C::Error> {
        self.inner.end()
    }
}

impl<C: ser::SerializeTupleVariant> ser::SerializeTupleVariant for Compound<'_, '_, C> {
    type Ok = C::Ok;
    type Error = C::Error;
    fn serialize_field<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), C::Error> {
        self.inner.serialize_field(&self.shaping.wrap(value))
    }
    fn end(self) -> Result<C::Ok, C::Error> {
        self.inner.end()
    }
}

impl<C: ser::SerializeMap> ser::SerializeMap for Compound<'_, '_, C> {
    type Ok = C::Ok;
    type Error = C::Error;
    fn serialize_key<T: Serialize + ?Sized>(&mut self, key: &T) -> Result<(), C::Error> {
        // A string key waits for its value: a citation renames it.
        match as_string(key) {
            Some(text) => {
                self.pending_key = Some(text);
                Ok(())
            }
            None => self.inner.serialize_key(key),
        }
    }
    fn serialize_value<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), C::Error> {
        match self.pending_key.take() {
            Some(key) => {
                if key == SOURCE_FIELD
                    && let Some(id) = self.shaping.citation(value)
                {
                    return self.inner.serialize_entry(SOURCE_ID_FIELD, &id);
                }
                self.inner.serialize_entry(&key, &self.shaping.wrap(value))
            }
            None => self.inner.serialize_value(&self.shaping.wrap(value)),
        }
    }
    fn end(mut self) -> Result<C::Ok, C::Error> {
        if let Some(table) = self.table() {
            self.inner.serialize_entry(SOURCES_FIELD, &table)?;
        }
        self.inner.end()
    }
}

impl<C: ser::SerializeStruct> ser::SerializeStruct for Compound<'_, '_, C> {
    type Ok = C::Ok;
    type Error = C::Error;
    fn serialize_field<T: Serialize + ?Sized>(
        &mut self,
        key: &'static str,
        value: &T,
    ) -> Result<(), C::Error> {
        if key == SOURCE_FIELD
            && let Some(id) = self.shaping.citation(value)
        {
            return self.inner.serialize_field(SOURCE_ID_FIELD, &id);
        }
        self.inner.serialize_field(key, &self.shaping.wrap(value))
    }
    fn skip_field(&mut self, key: &'static str) -> Result<(), C::Error> {
        self.inner.skip_field(key)
    }
    fn end(mut self) -> Result<C::Ok, C::Error> {
        if let Some(table) = self.table() {
            self.inner.serialize_field(SOURCES_FIELD, &table)?;
        }
        self.inner.end()
    }
}

impl<C: ser::SerializeStructVariant> ser::SerializeStructVariant for Compound<'_, '_, C> {
    type Ok = C::Ok;
    type Error = C::Error;
    fn serialize_field<T: Serialize + ?Sized>(
        &mut self,
        key: &'static str,
        value: &T,
    ) -> Result<(), C::Error> {
        if key == SOURCE_FIELD
            && let Some(id) = self.shaping.citation(value)
        {
            return self.inner.serialize_field(SOURCE_ID_FIELD, &id);
        }
        self.inner.serialize_field(key, &self.shaping.wrap(value))
    }
    fn skip_field(&mut self, key: &'static str) -> Result<(), C::Error> {
        self.inner.skip_field(key)
    }
    fn end(self) -> Result<C::Ok, C::Error> {
        self.inner.end()
    }
}

/// The string JSON would write for `value`, if it writes a string (a unit
/// enum variant is written as its name).
fn as_string<T: Serialize + ?Sized>(value: &T) -> Option<String> {
    match serde_json::to_value(value) {
        Ok(serde_json::Value::String(text)) => Some(text),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use serde_json::Value;

    use super::super::output::{SOURCE_FIELD, SOURCE_ID_FIELD, SOURCES_FIELD, shape};
    use super::super::{to_json_bytes, to_wire_bytes};

    /// The document with every `source_id` replaced by its text, and the
    /// table dropped: equal for any numbering of the sources.
    fn resolved(mut doc: Value) -> Value {
        let table: Vec<String> = doc
            .get(SOURCES_FIELD)
            .and_then(Value::as_array)
            .map(|entries| {
                entries
                    .iter()
                    .map(|e| e["text"].as_str().unwrap_or_default().to_owned())
                    .collect()
            })
            .unwrap_or_default();
        if let Value::Object(root) = &mut doc {
            root.remove(SOURCES_FIELD);
        }
        fn walk(value: &mut Value, table: &[String]) {
            match value {
                Value::Object(map) => {
                    if let Some(id) = map.remove(SOURCE_ID_FIELD) {
                        let id = id.as_u64().expect("a source id") as usize;
                        map.insert(SOURCE_FIELD.into(), Value::from(table[id].clone()));
                    }
                    map.values_mut().for_each(|v| walk(v, table));
                }
                Value::Array(items) => items.iter_mut().for_each(|v| walk(v, table)),
                _ => {}
            }
        }
        walk(&mut doc, &table);
        doc
    }

    #[test]
    fn streaming_gives_the_document_the_value_tree_gave() {
        let zones = [
            None,
            Some(chrono_tz::Europe::London),
            Some(chrono_tz::America::New_York),
            Some(chrono_tz::Australia::Adelaide),
        ];
        let mut inputs = crate::bench::varied_inputs(6, 2);
        for input in &mut inputs {
            input.include_session_fuel = true;
        }
        let mut checked = 0;
        for input in &inputs {
            let plan = crate::engine::week::plan_week(input).expect("valid");
            for zone in &zones {
                let streamed: Value =
                    serde_json::from_slice(&to_wire_bytes(&plan, zone.as_ref()).unwrap()).unwrap();
                let tree: Value = serde_json::from_slice(
                    &to_json_bytes(&shape(&plan, zone.as_ref()).unwrap()).unwrap(),
                )
                .unwrap();
                assert!(streamed.get(SOURCES_FIELD).is_some(), "plans cite sources");
                // Each text is listed once.
                let texts: Vec<&str> = streamed[SOURCES_FIELD]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|e| e["text"].as_str().unwrap())
                    .collect();
                let distinct: std::collections::HashSet<_> = texts.iter().collect();
                assert_eq!(distinct.len(), texts.len());
                assert_eq!(resolved(streamed), resolved(tree));
                checked += 1;
            }
        }
        assert_eq!(checked, inputs.len() * zones.len());
    }

    #[test]
    fn enum_labels_stay_values_and_local_times_get_offsets() {
        let body = serde_json::json!({
            "a": [{"text": "x", "source": "Thomas et al. 2016"}],
            "b": {"source": "measured"},
            "c": "2026-07-01T10:00:00",
            "d": {"2026-07-01T10:00:00": 1}
        });
        let zone = chrono_tz::Europe::London;
        let streamed: Value =
            serde_json::from_slice(&to_wire_bytes(&body, Some(&zone)).unwrap()).unwrap();
        assert_eq!(streamed["a"][0]["source_id"], 0);
        assert_eq!(streamed["b"]["source"], "measured");
        assert_eq!(streamed["c"], "2026-07-01T10:00:00+01:00");
        // Keys are names, not values: left as they are.
        assert_eq!(streamed["d"]["2026-07-01T10:00:00"], 1);
        assert_eq!(
            streamed["sources"],
            serde_json::json!([{"id": 0, "text": "Thomas et al. 2016"}])
        );
    }
}
