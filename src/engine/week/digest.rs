//! The bytes a day's key is hashed from: any `Serialize` value written in
//! a compact tagged binary form, so that distinct values give distinct
//! bytes without the cost of JSON (formatting every float as decimal text
//! and escaping every string took most of the time of building the keys).
//!
//! Every value starts with a tag byte; strings and byte strings carry their
//! length; sequences, maps, tuples and structs end with a marker; struct
//! fields carry their names and enum variants their index and name. The
//! encoding is therefore prefix-free: it can be read back unambiguously, so
//! two different values of the same type never give the same bytes, even
//! with fields skipped when empty. Floats are written as their IEEE bits,
//! so the key sees every bit a computation would.

use serde::Serialize;
use serde::ser;

/// Writes `value` into `out` (appending).
pub(super) fn write<T: Serialize + ?Sized>(out: &mut Vec<u8>, value: &T) {
    // The writer never fails, and the engine's inputs are plain data.
    let _ = value.serialize(&mut Writer { out });
}

#[derive(Debug)]
pub(super) struct Never;

impl std::fmt::Display for Never {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("a value that cannot be written")
    }
}

impl std::error::Error for Never {}

impl ser::Error for Never {
    fn custom<T: std::fmt::Display>(_: T) -> Self {
        Never
    }
}

pub(super) struct Writer<'a> {
    out: &'a mut Vec<u8>,
}

mod tag {
    pub const BOOL: u8 = 1;
    pub const INT: u8 = 2;
    pub const UINT: u8 = 3;
    pub const FLOAT: u8 = 4;
    pub const CHAR: u8 = 5;
    pub const STR: u8 = 6;
    pub const BYTES: u8 = 7;
    pub const NONE: u8 = 8;
    pub const SOME: u8 = 9;
    pub const UNIT: u8 = 10;
    pub const UNIT_VARIANT: u8 = 11;
    pub const NEWTYPE: u8 = 12;
    pub const NEWTYPE_VARIANT: u8 = 13;
    pub const SEQ: u8 = 14;
    pub const TUPLE: u8 = 15;
    pub const TUPLE_VARIANT: u8 = 16;
    pub const MAP: u8 = 17;
    pub const STRUCT: u8 = 18;
    pub const STRUCT_VARIANT: u8 = 19;
    pub const INT128: u8 = 20;
    pub const UINT128: u8 = 21;
    pub const END: u8 = 0xff;
}

impl Writer<'_> {
    fn text(&mut self, tag: u8, bytes: &[u8]) {
        self.out.push(tag);
        self.out
            .extend_from_slice(&(bytes.len() as u64).to_le_bytes());
        self.out.extend_from_slice(bytes);
    }

    fn variant(&mut self, tag: u8, index: u32, name: &str) {
        self.out.push(tag);
        self.out.extend_from_slice(&index.to_le_bytes());
        self.text(tag::STR, name.as_bytes());
    }
}

impl<'a, 'b> ser::Serializer for &'a mut Writer<'b> {
    type Ok = ();
    type Error = Never;
    type SerializeSeq = Self;
    type SerializeTuple = Self;
    type SerializeTupleStruct = Self;
    type SerializeTupleVariant = Self;
    type SerializeMap = Self;
    type SerializeStruct = Self;
    type SerializeStructVariant = Self;

    fn serialize_bool(self, v: bool) -> Result<(), Never> {
        self.out.extend_from_slice(&[tag::BOOL, u8::from(v)]);
        Ok(())
    }
    fn serialize_i8(self, v: i8) -> Result<(), Never> {
        self.serialize_i64(i64::from(v))
    }
    fn serialize_i16(self, v: i16) -> Result<(), Never> {
        self.serialize_i64(i64::from(v))
    }
    fn serialize_i32(self, v: i32) -> Result<(), Never> {
        self.serialize_i64(i64::from(v))
    }
    fn serialize_i64(self, v: i64) -> Result<(), Never> {
        self.out.push(tag::INT);
        self.out.extend_from_slice(&v.to_le_bytes());
        Ok(())
    }
    fn serialize_i128(self, v: i128) -> Result<(), Never> {
        self.out.push(tag::INT128);
        self.out.extend_from_slice(&v.to_le_bytes());
        Ok(())
    }
    fn serialize_u8(self, v: u8) -> Result<(), Never> {
        self.serialize_u64(u64::from(v))
    }
    fn serialize_u16(self, v: u16) -> Result<(), Never> {
        self.serialize_u64(u64::from(v))
    }
    fn serialize_u32(self, v: u32) -> Result<(), Never> {
        self.serialize_u64(u64::from(v))
    }
    fn serialize_u64(self, v: u64) -> Result<(), Never> {
        self.out.push(tag::UINT);
        self.out.extend_from_slice(&v.to_le_bytes());
        Ok(())
    }
    fn serialize_u128(self, v: u128) -> Result<(), Never> {
        self.out.push(tag::UINT128);
        self.out.extend_from_slice(&v.to_le_bytes());
        Ok(())
    }
    fn serialize_f32(self, v: f32) -> Result<(), Never> {
        self.serialize_f64(f64::from(v))
    }
    fn serialize_f64(self, v: f64) -> Result<(), Never> {
        self.out.push(tag::FLOAT);
        self.out.extend_from_slice(&v.to_bits().to_le_bytes());
        Ok(())
    }
    fn serialize_char(self, v: char) -> Result<(), Never> {
        self.out.push(tag::CHAR);
        self.out.extend_from_slice(&u32::from(v).to_le_bytes());
        Ok(())
    }
    fn serialize_str(self, v: &str) -> Result<(), Never> {
        self.text(tag::STR, v.as_bytes());
        Ok(())
    }
    fn serialize_bytes(self, v: &[u8]) -> Result<(), Never> {
        self.text(tag::BYTES, v);
        Ok(())
    }
    fn serialize_none(self) -> Result<(), Never> {
        self.out.push(tag::NONE);
        Ok(())
    }
    fn serialize_some<T: Serialize + ?Sized>(self, value: &T) -> Result<(), Never> {
        self.out.push(tag::SOME);
        value.serialize(self)
    }
    fn serialize_unit(self) -> Result<(), Never> {
        self.out.push(tag::UNIT);
        Ok(())
    }
    fn serialize_unit_struct(self, _name: &'static str) -> Result<(), Never> {
        self.serialize_unit()
    }
    fn serialize_unit_variant(
        self,
        _name: &'static str,
        index: u32,
        variant: &'static str,
    ) -> Result<(), Never> {
        self.variant(tag::UNIT_VARIANT, index, variant);
        Ok(())
    }
    fn serialize_newtype_struct<T: Serialize + ?Sized>(
        self,
        _name: &'static str,
        value: &T,
    ) -> Result<(), Never> {
        self.out.push(tag::NEWTYPE);
        value.serialize(self)
    }
    fn serialize_newtype_variant<T: Serialize + ?Sized>(
        self,
        _name: &'static str,
        index: u32,
        variant: &'static str,
        value: &T,
    ) -> Result<(), Never> {
        self.variant(tag::NEWTYPE_VARIANT, index, variant);
        value.serialize(self)
    }
    fn serialize_seq(self, _len: Option<usize>) -> Result<Self, Never> {
        self.out.push(tag::SEQ);
        Ok(self)
    }
    fn serialize_tuple(self, _len: usize) -> Result<Self, Never> {
        self.out.push(tag::TUPLE);
        Ok(self)
    }
    fn serialize_tuple_struct(self, _name: &'static str, _len: usize) -> Result<Self, Never> {
        self.out.push(tag::TUPLE);
        Ok(self)
    }
    fn serialize_tuple_variant(
        self,
        _name: &'static str,
        index: u32,
        variant: &'static str,
        _len: usize,
    ) -> Result<Self, Never> {
        self.variant(tag::TUPLE_VARIANT, index, variant);
        Ok(self)
    }
    fn serialize_map(self, _len: Option<usize>) -> Result<Self, Never> {
        self.out.push(tag::MAP);
        Ok(self)
    }
    fn serialize_struct(self, _name: &'static str, _len: usize) -> Result<Self, Never> {
        self.out.push(tag::STRUCT);
        Ok(self)
    }
    fn serialize_struct_variant(
        self,
        _name: &'static str,
        index: u32,
        variant: &'static str,
        _len: usize,
    ) -> Result<Self, Never> {
        self.variant(tag::STRUCT_VARIANT, index, variant);
        Ok(self)
    }
}

impl ser::SerializeSeq for &mut Writer<'_> {
    type Ok = ();
    type Error = Never;
    fn serialize_element<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), Never> {
        value.serialize(&mut **self)
    }
    fn end(self) -> Result<(), Never> {
        self.out.push(tag::END);
        Ok(())
    }
}

impl ser::SerializeTuple for &mut Writer<'_> {
    type Ok = ();
    type Error = Never;
    fn serialize_element<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), Never> {
        value.serialize(&mut **self)
    }
    fn end(self) -> Result<(), Never> {
        self.out.push(tag::END);
        Ok(())
    }
}

impl ser::SerializeTupleStruct for &mut Writer<'_> {
    type Ok = ();
    type Error = Never;
    fn serialize_field<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), Never> {
        value.serialize(&mut **self)
    }
    fn end(self) -> Result<(), Never> {
        self.out.push(tag::END);
        Ok(())
    }
}

impl ser::SerializeTupleVariant for &mut Writer<'_> {
    type Ok = ();
    type Error = Never;
    fn serialize_field<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), Never> {
        value.serialize(&mut **self)
    }
    fn end(self) -> Result<(), Never> {
        self.out.push(tag::END);
        Ok(())
    }
}

impl ser::SerializeMap for &mut Writer<'_> {
    type Ok = ();
    type Error = Never;
    fn serialize_key<T: Serialize + ?Sized>(&mut self, key: &T) -> Result<(), Never> {
        key.serialize(&mut **self)
    }
    fn serialize_value<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), Never> {
        value.serialize(&mut **self)
    }
    fn end(self) -> Result<(), Never> {
        self.out.push(tag::END);
        Ok(())
    }
}

impl ser::SerializeStruct for &mut Writer<'_> {
    type Ok = ();
    type Error = Never;
    fn serialize_field<T: Serialize + ?Sized>(
        &mut self,
        key: &'static str,
        value: &T,
    ) -> Result<(), Never> {
        self.text(tag::STR, key.as_bytes());
        value.serialize(&mut **self)
    }
    fn end(self) -> Result<(), Never> {
        self.out.push(tag::END);
        Ok(())
    }
}

impl ser::SerializeStructVariant for &mut Writer<'_> {
    type Ok = ();
    type Error = Never;
    fn serialize_field<T: Serialize + ?Sized>(
        &mut self,
        key: &'static str,
        value: &T,
    ) -> Result<(), Never> {
        self.text(tag::STR, key.as_bytes());
        value.serialize(&mut **self)
    }
    fn end(self) -> Result<(), Never> {
        self.out.push(tag::END);
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde::Serialize;

    fn bytes<T: Serialize>(value: &T) -> Vec<u8> {
        let mut out = Vec::new();
        write(&mut out, value);
        out
    }

    #[derive(Serialize)]
    struct Skipping {
        #[serde(skip_serializing_if = "Option::is_none")]
        a: Option<u32>,
        #[serde(skip_serializing_if = "Option::is_none")]
        b: Option<u32>,
        c: Vec<String>,
    }

    #[test]
    fn values_that_differ_give_bytes_that_differ() {
        // Skipped fields are told apart by the names of the fields present.
        assert_ne!(
            bytes(&Skipping {
                a: Some(1),
                b: None,
                c: vec![]
            }),
            bytes(&Skipping {
                a: None,
                b: Some(1),
                c: vec![]
            })
        );
        // String boundaries are part of the bytes.
        assert_ne!(
            bytes(&Skipping {
                a: None,
                b: None,
                c: vec!["ab".into(), "c".into()]
            }),
            bytes(&Skipping {
                a: None,
                b: None,
                c: vec!["a".into(), "bc".into()]
            })
        );
        // Every bit of a float counts, the sign of zero too.
        assert_ne!(bytes(&0.0_f64), bytes(&-0.0_f64));
        assert_ne!(
            bytes(&0.1_f64),
            bytes(&(0.1_f64 + f64::EPSILON / 8.0).next_up())
        );
        assert_ne!(bytes(&Some(())), bytes(&None::<()>));
        assert_ne!(bytes(&(1u8, vec![2u8])), bytes(&(vec![1u8], 2u8)));
        assert_eq!(bytes(&vec![1.5_f64, 2.0]), bytes(&vec![1.5_f64, 2.0]));
    }

    #[test]
    fn engine_inputs_are_written_whole() {
        // A change to any session field changes the bytes.
        let inputs = crate::bench::varied_inputs(2, 1);
        let session = &inputs[0].sessions[0];
        let base = bytes(session);
        let mut moved = session.clone();
        moved.start_time += chrono::TimeDelta::minutes(1);
        assert_ne!(bytes(&moved), base);
        let mut retitled = session.clone();
        retitled.title.push('!');
        assert_ne!(bytes(&retitled), base);
        let mut longer = session.clone();
        longer.segments[0].minutes += 1e-9;
        assert_ne!(bytes(&longer), base);
        assert_ne!(bytes(&inputs[0].profile), bytes(&inputs[1].profile));
    }
}
