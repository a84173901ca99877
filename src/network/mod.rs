//! Series/parallel networks of stocked parts: the tree (`net`), every distinct shape of one to
//! four pieces (`shape`), and the pool of one kind of part with the exact walk over all networks
//! whose value lies in a window (`pool`). Knows nothing of the store or of timing.

pub mod net;
pub mod pool;
pub mod shape;

pub use net::{Combine, Net, NetParseError, parse_net};
pub use pool::{Cand, Item, Pool, Step};
pub use shape::{Op, Shape};
