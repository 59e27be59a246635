//! The columns of a Parquet file that a block reads: found by name among
//! the top-level fields, each with how its values are written as text.
//! Nested and repeated fields, and types without a plain text form, are
//! refused with the column's name and type.

use crate::data::{DataError, Header};
use ::parquet::basic::{ConvertedType, LogicalType, Repetition, TimeUnit, Type as Physical};
use ::parquet::schema::types::{ColumnDescriptor, SchemaDescriptor};

/// How a column's values become text.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Kind {
    Boolean,
    Int32,
    UInt32,
    Int64,
    UInt64,
    /// An unscaled integer and its scale: exact decimal text.
    Decimal(u32),
    Float,
    Double,
    Text,
    /// Days since 1970-01-01.
    Date,
    /// Units since 1970-01-01T00:00:00; `utc` adds the `Z`.
    Timestamp {
        unit: Unit,
        utc: bool,
    },
}

/// The unit of a timestamp.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Unit {
    Millis,
    Micros,
    Nanos,
}

impl Unit {
    /// Units per second and digits of a second's fraction.
    pub(super) fn per_second(self) -> (i64, usize) {
        match self {
            Unit::Millis => (1_000, 3),
            Unit::Micros => (1_000_000, 6),
            Unit::Nanos => (1_000_000_000, 9),
        }
    }
}

/// A column that is read: its name, its leaf in the schema, and its type.
#[derive(Debug, Clone)]
pub(super) struct Column {
    pub(super) name: String,
    pub(super) leaf: usize,
    pub(super) kind: Kind,
    /// The definition level of a present value (0 when every value is).
    pub(super) max_def: i16,
}

/// The named columns, each once, in the order first named.
pub(super) fn chosen(schema: &SchemaDescriptor, names: &[&str]) -> Result<Vec<Column>, DataError> {
    let mut columns: Vec<Column> = Vec::with_capacity(names.len());
    for name in names {
        if columns.iter().any(|c| c.name == *name) {
            continue;
        }
        columns.push(column(schema, name)?);
    }
    Ok(columns)
}

/// Every top-level column, in schema order (for blocks that read whole tables).
pub(super) fn every(schema: &SchemaDescriptor) -> Result<Vec<Column>, DataError> {
    field_names(schema)
        .iter()
        .map(|name| column(schema, name))
        .collect()
}

fn field_names(schema: &SchemaDescriptor) -> Vec<String> {
    schema
        .root_schema()
        .get_fields()
        .iter()
        .map(|f| f.name().to_string())
        .collect()
}

/// The top-level column `name`, or why it cannot be read.
fn column(schema: &SchemaDescriptor, name: &str) -> Result<Column, DataError> {
    let fields = schema.root_schema().get_fields();
    let Some(field) = fields.iter().find(|f| f.name() == name) else {
        // The CSV header's message and nearest-name hint, on line 1.
        let header = Header {
            names: field_names(schema),
            line: 1,
        };
        return Err(header
            .column(name)
            .err()
            .unwrap_or_else(|| refused(name, "cannot be found")));
    };
    if field.is_group() {
        return Err(refused(
            name,
            "is nested (a list, map or group of fields); sheaf reads flat columns only",
        ));
    }
    if field.get_basic_info().repetition() == Repetition::REPEATED {
        return Err(refused(
            name,
            "is repeated (several values per row); sheaf reads one value per row",
        ));
    }
    let leaf = (0..schema.num_columns())
        .find(|&i| schema.column(i).path().parts() == [name])
        .ok_or_else(|| refused(name, "has no values in the file's schema"))?;
    let descr = schema.column(leaf);
    let kind = kind(&descr)
        .map_err(|what| refused(name, &format!("holds {what}, which sheaf does not read")))?;
    Ok(Column {
        name: name.to_string(),
        leaf,
        kind,
        max_def: descr.max_def_level(),
    })
}

fn refused(name: &str, why: &str) -> DataError {
    DataError {
        line: Some(1),
        column: None,
        message: format!("column `{name}` {why}"),
        hint: Some(
            "write the column as numbers (integer, decimal or floating point), strings, booleans, dates or timestamps, or leave it out of the block".into(),
        ),
    }
}

/// How a column's values are written, or a description of its type.
fn kind(descr: &ColumnDescriptor) -> Result<Kind, String> {
    let physical = descr.physical_type();
    let logical = descr.logical_type_ref();
    let converted = descr.converted_type();
    let decimal =
        converted == ConvertedType::DECIMAL || matches!(logical, Some(LogicalType::Decimal(_)));
    if decimal {
        let scale = u32::try_from(descr.type_scale())
            .map_err(|_| format!("decimals with a negative scale ({})", descr.type_scale()))?;
        return match physical {
            Physical::INT32
            | Physical::INT64
            | Physical::FIXED_LEN_BYTE_ARRAY
            | Physical::BYTE_ARRAY => Ok(Kind::Decimal(scale)),
            other => Err(format!("decimals stored as {other}")),
        };
    }
    let unsigned = matches!(logical, Some(LogicalType::Integer(t)) if !t.is_signed)
        || matches!(
            converted,
            ConvertedType::UINT_8
                | ConvertedType::UINT_16
                | ConvertedType::UINT_32
                | ConvertedType::UINT_64
        );
    let described = || match logical {
        Some(l) => format!("{physical} values annotated {l:?}"),
        None if converted != ConvertedType::NONE => {
            format!("{physical} values annotated {converted}")
        }
        None => format!("{physical} values"),
    };
    match physical {
        Physical::BOOLEAN => Ok(Kind::Boolean),
        Physical::INT32 => match (logical, converted) {
            (Some(LogicalType::Date), _) | (_, ConvertedType::DATE) => Ok(Kind::Date),
            (Some(LogicalType::Time(_)), _) | (_, ConvertedType::TIME_MILLIS) => Err(described()),
            _ if unsigned => Ok(Kind::UInt32),
            _ => Ok(Kind::Int32),
        },
        Physical::INT64 => match (logical, converted) {
            (Some(LogicalType::Timestamp(t)), _) => Ok(Kind::Timestamp {
                unit: match t.unit {
                    TimeUnit::MILLIS => Unit::Millis,
                    TimeUnit::MICROS => Unit::Micros,
                    TimeUnit::NANOS => Unit::Nanos,
                },
                utc: t.is_adjusted_to_u_t_c,
            }),
            (_, ConvertedType::TIMESTAMP_MILLIS) => Ok(Kind::Timestamp {
                unit: Unit::Millis,
                utc: true,
            }),
            (_, ConvertedType::TIMESTAMP_MICROS) => Ok(Kind::Timestamp {
                unit: Unit::Micros,
                utc: true,
            }),
            (Some(LogicalType::Time(_)), _) | (_, ConvertedType::TIME_MICROS) => Err(described()),
            _ if unsigned => Ok(Kind::UInt64),
            _ => Ok(Kind::Int64),
        },
        Physical::INT96 => Err("INT96 values (a legacy timestamp encoding)".into()),
        Physical::FLOAT => Ok(Kind::Float),
        Physical::DOUBLE => Ok(Kind::Double),
        Physical::BYTE_ARRAY => match (logical, converted) {
            (None, ConvertedType::BSON) => Err(described()),
            (None | Some(LogicalType::String | LogicalType::Enum | LogicalType::Json), _) => {
                Ok(Kind::Text)
            }
            _ => Err(described()),
        },
        Physical::FIXED_LEN_BYTE_ARRAY => Err(described()),
    }
}
