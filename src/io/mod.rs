//! Reading input files: price and yield series (CSV split by the csv crate, with file/line
//! messages), spread tables, wide price tables (CSV and Parquet through polars, workbooks through
//! calamine, under the guard of `guard`) and the bytes' SHA-256 that every receipt records. Nothing here knows what a case or a beta is;
//! the readers take a path, the column names and what kind of value a column holds.

pub mod encoding;
pub mod guard;
pub mod parquet_types;
pub mod sanity;
pub mod series;
pub mod spread_table;
pub mod tables;
