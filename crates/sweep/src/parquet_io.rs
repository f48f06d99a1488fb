//! Apache Parquet through the arrow-rs crates: a part's columns as one Arrow
//! record batch, each field carrying `unit` and `description` in its metadata,
//! and the file carrying the sweep hash and program in its key-value metadata.

use crate::run::{Column, ColumnData, ColumnInfo, Kind};
use arrow_array::{Array, ArrayRef, Float64Array, RecordBatch, StringArray, UInt64Array};
use arrow_schema::{DataType, Field, Schema};
use parquet::arrow::arrow_reader::ParquetRecordBatchReaderBuilder;
use parquet::arrow::ArrowWriter;
use parquet::file::metadata::KeyValue;
use parquet::file::properties::WriterProperties;
use std::collections::HashMap;
use std::path::Path;
use std::sync::Arc;

/// The Arrow schema of these columns (units and descriptions in the field metadata).
pub fn schema(columns: &[ColumnInfo]) -> Schema {
    Schema::new(
        columns
            .iter()
            .map(|c| {
                let t = match c.kind {
                    Kind::Float => DataType::Float64,
                    Kind::Text => DataType::Utf8,
                    Kind::Index => DataType::UInt64,
                };
                Field::new(&c.name, t, c.kind == Kind::Float).with_metadata(HashMap::from([
                    ("unit".to_string(), c.unit.clone()),
                    ("description".to_string(), c.description.clone()),
                ]))
            })
            .collect::<Vec<_>>(),
    )
}

fn array(data: &ColumnData) -> ArrayRef {
    match data {
        ColumnData::Float(v) => Arc::new(Float64Array::from(v.clone())),
        ColumnData::Text(v) => Arc::new(StringArray::from(v.clone())),
        ColumnData::Index(v) => Arc::new(UInt64Array::from(v.clone())),
    }
}

/// Write columns as a Parquet file (uncompressed, one row group per 65,536
/// rows) with `metadata` as the file's key-value metadata.
pub fn write(path: &Path, columns: &[Column], metadata: &[(&str, String)]) -> Result<(), String> {
    let infos: Vec<ColumnInfo> = columns.iter().map(|c| c.info.clone()).collect();
    let schema = Arc::new(schema(&infos));
    let batch = RecordBatch::try_new(
        schema.clone(),
        columns.iter().map(|c| array(&c.data)).collect(),
    )
    .map_err(|e| format!("cannot build the record batch: {e}"))?;
    let props = WriterProperties::builder()
        .set_max_row_group_row_count(Some(65_536))
        .set_key_value_metadata(Some(
            metadata
                .iter()
                .map(|(k, v)| KeyValue::new((*k).to_string(), v.clone()))
                .collect(),
        ))
        .build();
    let file = std::fs::File::create(path)
        .map_err(|e| format!("{}: cannot write: {e}", path.display()))?;
    let mut w = ArrowWriter::try_new(file, schema, Some(props))
        .map_err(|e| format!("{}: cannot write Parquet: {e}", path.display()))?;
    w.write(&batch)
        .and_then(|_| w.close().map(|_| ()))
        .map_err(|e| format!("{}: cannot write Parquet: {e}", path.display()))?;
    Ok(())
}

/// Read a Parquet file written by [`write`] back into columns.
pub fn read(path: &Path) -> Result<Vec<Column>, String> {
    let fail = |e: &dyn std::fmt::Display| format!("{}: cannot read Parquet: {e}", path.display());
    let file = std::fs::File::open(path).map_err(|e| fail(&e))?;
    let builder = ParquetRecordBatchReaderBuilder::try_new(file).map_err(|e| fail(&e))?;
    let schema = builder.schema().clone();
    let mut columns: Vec<Column> = schema
        .fields()
        .iter()
        .map(|f| {
            let meta = f.metadata();
            let (kind, data) = match f.data_type() {
                DataType::Float64 => (Kind::Float, ColumnData::Float(Vec::new())),
                DataType::UInt64 => (Kind::Index, ColumnData::Index(Vec::new())),
                _ => (Kind::Text, ColumnData::Text(Vec::new())),
            };
            Column {
                info: ColumnInfo {
                    name: f.name().clone(),
                    unit: meta.get("unit").cloned().unwrap_or_default(),
                    description: meta.get("description").cloned().unwrap_or_default(),
                    kind,
                },
                data,
            }
        })
        .collect();
    for batch in builder.build().map_err(|e| fail(&e))? {
        let batch = batch.map_err(|e| fail(&e))?;
        for (col, a) in columns.iter_mut().zip(batch.columns()) {
            match &mut col.data {
                ColumnData::Float(v) => {
                    let a = a
                        .as_any()
                        .downcast_ref::<Float64Array>()
                        .ok_or_else(|| fail(&"a float column"))?;
                    v.extend((0..a.len()).map(|i| a.is_valid(i).then(|| a.value(i))));
                }
                ColumnData::Index(v) => {
                    let a = a
                        .as_any()
                        .downcast_ref::<UInt64Array>()
                        .ok_or_else(|| fail(&"an index column"))?;
                    v.extend(a.values().iter().copied());
                }
                ColumnData::Text(v) => {
                    let a = a
                        .as_any()
                        .downcast_ref::<StringArray>()
                        .ok_or_else(|| fail(&"a text column"))?;
                    v.extend((0..a.len()).map(|i| a.value(i).to_string()));
                }
            }
        }
    }
    Ok(columns)
}
