//! Tables (Parquet and CSV through polars), atomic writes, provenance metadata. The objects
//! table of the DESIGN contract, a population type, is `crate::population::objects`.

pub mod out_dir;
pub mod parquet_pages;
pub mod provenance;
pub mod sink;
pub mod spec_text;
pub mod table;
pub mod table_view;

pub use out_dir::OutDir;
pub use provenance::Provenance;
pub use table::{Columns, Format, read_table, write_table};
