mod bufferer;
mod internal_writer;
mod io_trait_wrap;
mod multipart_upload;
mod writer;

pub use io_trait_wrap::CloudWriterIoTraitWrap;
pub use writer::CloudWriter;
