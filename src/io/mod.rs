//! Tables (Parquet and CSV through polars), atomic writes, provenance metadata, and the
//! objects table of the DESIGN contract.

pub mod objects;
pub mod out_dir;
pub mod provenance;
pub mod sink;
pub mod spec_text;
pub mod table;
pub mod table_view;

pub use out_dir::OutDir;
pub use provenance::Provenance;
pub use table::{Columns, Format, read_table, write_table};
