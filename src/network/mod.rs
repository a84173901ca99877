//! Series/parallel networks of stocked parts: the tree (`net`), and (search work) enumeration
//! of every network shape up to k pieces with exact value and worst-case tolerance.

pub mod net;

pub use net::{Combine, Net, NetParseError, parse_net};
