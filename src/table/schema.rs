//! What a Parquet or Arrow IPC file holds before polars converts its
//! schema: every column's name (two columns of one name included) and the
//! columns whose type descry's polars cannot hold.
//!
//! polars turns a file's whole Arrow schema into its own types before it
//! reads any column, and stops the process on a type it was built without
//! (decimals, half floats, fixed-size lists, unions, intervals, run-end
//! encoded arrays) or on two columns of one name. Looking first lets a
//! command that needs one column read only that one, and lets `apply` say
//! which column it cannot carry.

use std::fs::File;
use std::io::{Read, Seek, SeekFrom};
use std::path::Path;

use polars::prelude::*;
use polars_arrow::datatypes::{ArrowDataType, IntervalUnit};

/// The columns of a Parquet or Arrow IPC file, in file order.
#[derive(Debug, Clone)]
pub struct FileColumns {
    /// Every column's name, in order; a name may appear twice.
    pub names: Vec<String>,
    /// The columns polars (as descry builds it) cannot read, with their
    /// Arrow type written out.
    pub unsupported: Vec<(String, String)>,
}

impl FileColumns {
    fn of(names: Vec<String>, schema: &ArrowSchema) -> FileColumns {
        let unsupported = schema
            .iter_values()
            .filter(|f| !readable(&f.dtype))
            .map(|f| (f.name.to_string(), format!("{:?}", f.dtype)))
            .collect();
        FileColumns { names, unsupported }
    }

    /// Whether polars can scan the whole file (no column it cannot hold, no
    /// name twice).
    pub fn all_readable(&self) -> bool {
        self.unsupported.is_empty() && self.repeated().is_none()
    }

    /// The first name given to more than one column, with the 1-based
    /// positions of its columns.
    pub fn repeated(&self) -> Option<(&str, Vec<usize>)> {
        self.names.iter().enumerate().find_map(|(i, name)| {
            let at: Vec<usize> = (i..self.names.len())
                .filter(|&j| self.names[j] == *name)
                .map(|j| j + 1)
                .collect();
            (at.len() > 1).then_some((name.as_str(), at))
        })
    }

    /// The unsupported type of column `name`, if it has one.
    pub fn unsupported_type(&self, name: &str) -> Option<&str> {
        self.unsupported
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, t)| t.as_str())
    }
}

/// The columns of a Parquet file.
pub fn parquet_columns(path: &Path) -> PolarsResult<FileColumns> {
    let schema = ParquetReader::new(File::open(path)?).schema()?;
    let names = schema.iter_names().map(|n| n.to_string()).collect();
    Ok(FileColumns::of(names, &schema))
}

/// The columns of an Arrow IPC file. The names come from the footer
/// itself: polars' schema keeps one column per name. A column polars'
/// IPC reader cannot even describe (run-end encoded, list views) makes
/// the whole file unreadable: that reader stops on it whichever columns
/// are asked for.
pub fn ipc_columns(path: &Path) -> PolarsResult<FileColumns> {
    let footer = ipc_footer(&mut File::open(path)?)?;
    let fields = footer_fields(&footer)?;
    if let Some((name, what)) = fields
        .iter()
        .find_map(|(n, f)| unopenable(f).map(|w| (n, w)))
    {
        polars_bail!(ComputeError:
            "column \"{}\" is {what}, which descry's Arrow IPC reader cannot open, whichever columns are read; \
             write the file without it (e.g. pyarrow: cast the column to its plain type)",
            crate::render::escaped(name));
    }
    let names = fields.into_iter().map(|(n, _)| n).collect();
    let schema = IpcReader::new(File::open(path)?).schema()?;
    let columns = FileColumns::of(names, &schema);
    // polars' IPC reader keeps one column per name and then mismatches
    // the file's columns, whichever are read.
    if let Some((name, at)) = columns.repeated() {
        polars_bail!(ComputeError:
            "the column name \"{}\" is given to more than one column ({}); descry's Arrow IPC reader \
             cannot read such a file, whichever columns are read: rename one",
            crate::render::escaped(name), crate::read::positions(&at));
    }
    Ok(columns)
}

/// The bytes of an Arrow IPC file's footer.
fn ipc_footer(file: &mut File) -> PolarsResult<Vec<u8>> {
    let end = file.seek(SeekFrom::End(0))?;
    if end < 10 {
        polars_bail!(ComputeError: "not an Arrow IPC file: too short");
    }
    let mut tail = [0u8; 10];
    file.seek(SeekFrom::End(-10))?;
    file.read_exact(&mut tail)?;
    let footer_len = u32::from_le_bytes(tail[..4].try_into().expect("4 bytes")) as u64;
    if &tail[4..] != b"ARROW1" || footer_len + 10 > end {
        polars_bail!(ComputeError: "not an Arrow IPC file: no footer at the end");
    }
    let mut footer = vec![0; footer_len as usize];
    file.seek(SeekFrom::End(-10 - footer_len as i64))?;
    file.read_exact(&mut footer)?;
    Ok(footer)
}

type FieldRef<'a> = arrow_format::ipc::FieldRef<'a>;

/// The top-level fields of a footer, with their names, in order.
fn footer_fields(footer: &[u8]) -> PolarsResult<Vec<(String, FieldRef<'_>)>> {
    use arrow_format::ipc::planus::ReadAsRoot;
    let bad =
        || polars_err!(ComputeError: "not an Arrow IPC file: its footer holds no readable schema");
    let footer = arrow_format::ipc::FooterRef::read_as_root(footer).map_err(|_| bad())?;
    let fields = footer
        .schema()
        .ok()
        .flatten()
        .and_then(|s| s.fields().ok().flatten())
        .ok_or_else(bad)?;
    fields
        .iter()
        .map(|f| {
            let f = f.map_err(|_| bad())?;
            let name = f.name().ok().flatten().unwrap_or("").to_owned();
            Ok((name, f))
        })
        .collect()
}

/// What in a field's type (or its children's) polars' IPC reader cannot
/// describe.
fn unopenable(field: &FieldRef<'_>) -> Option<&'static str> {
    use arrow_format::ipc::TypeRef;
    match field.type_() {
        Ok(Some(TypeRef::RunEndEncoded(_))) => return Some("run-end encoded"),
        Ok(Some(TypeRef::ListView(_) | TypeRef::LargeListView(_))) => return Some("a list view"),
        _ => {}
    }
    let children = field.children().ok().flatten()?;
    children.iter().flatten().find_map(|c| unopenable(&c))
}

/// Whether polars, with the type features descry turns on, holds this type
/// (mirrors polars' own conversion, which stops the process on the others).
/// The Python package checks the Arrow columns it is handed with it too.
pub fn readable(dtype: &ArrowDataType) -> bool {
    use ArrowDataType as A;
    match dtype {
        A::Null
        | A::Boolean
        | A::Int8
        | A::Int16
        | A::Int32
        | A::Int64
        | A::UInt8
        | A::UInt16
        | A::UInt32
        | A::UInt64
        | A::Float32
        | A::Float64
        | A::Date32
        | A::Date64
        | A::Time32(_)
        | A::Time64(_)
        | A::Duration(_)
        | A::Utf8
        | A::LargeUtf8
        | A::Utf8View
        | A::Binary
        | A::LargeBinary
        | A::BinaryView
        | A::FixedSizeBinary(_) => true,
        A::Timestamp(_, tz) => tz
            .as_ref()
            .is_none_or(|tz| polars::prelude::TimeZone::opt_try_new(Some(tz.clone())).is_ok()),
        A::List(f) | A::LargeList(f) | A::Map(f, _) => readable(&f.dtype),
        A::Struct(fields) => fields.iter().all(|f| readable(&f.dtype)),
        A::Dictionary(_, values, _) => readable(values),
        A::Interval(IntervalUnit::MonthDayNano | IntervalUnit::MonthDayMillis) => false,
        _ => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use polars_arrow::datatypes::{Field as ArrowField, UnionMode};

    #[test]
    fn plain_types_are_readable_and_exotic_ones_are_not() {
        let item = |t| Box::new(ArrowField::new("item".into(), t, true));
        assert!(readable(&ArrowDataType::Float64));
        assert!(readable(&ArrowDataType::LargeList(item(
            ArrowDataType::Utf8
        ))));
        assert!(!readable(&ArrowDataType::Float16));
        assert!(!readable(&ArrowDataType::Decimal(10, 2)));
        assert!(!readable(&ArrowDataType::FixedSizeList(
            item(ArrowDataType::Int32),
            3
        )));
        assert!(!readable(&ArrowDataType::List(item(
            ArrowDataType::Decimal256(40, 2)
        ))));
        assert!(!readable(&ArrowDataType::Union(Box::new(
            polars_arrow::datatypes::UnionType {
                fields: vec![],
                ids: None,
                mode: UnionMode::Dense
            }
        ))));
    }
}
