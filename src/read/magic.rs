//! Every format's leading bytes in one place: the compressions plumb decodes or names, and plumb's
//! own store file. The sniffer reads them here and the store writer writes its own from here, so
//! the two can never disagree.

/// A zstd frame (RFC 8878, section 3.1.1).
pub(crate) const ZSTD: [u8; 4] = [0x28, 0xB5, 0x2F, 0xFD];
/// gzip members (RFC 1952, section 2.3.1).
pub(crate) const GZIP: [u8; 2] = [0x1F, 0x8B];
/// xz streams (the .xz file format, section 2.1.1.1).
pub(crate) const XZ: [u8; 6] = [0xFD, b'7', b'z', b'X', b'Z', 0x00];
/// lz4 frames (LZ4 frame format description).
pub(crate) const LZ4: [u8; 4] = [0x04, 0x22, 0x4D, 0x18];
/// zip local file headers (PKWARE APPNOTE, section 4.3.7).
pub(crate) const ZIP: [u8; 4] = *b"PK\x03\x04";
/// bzip2 streams start with `BZh` and a block-size digit.
pub(crate) const BZIP2: [u8; 3] = *b"BZh";
/// Apache Parquet files start and end with these bytes (the Parquet file format specification).
pub(crate) const PARQUET: [u8; 4] = *b"PAR1";
/// plumb's store file (see `store::file`): a PNG-style signature that no text file starts with.
pub(crate) const STORE: &[u8; 8] = b"\x89PLB\r\n\x1a\n";
