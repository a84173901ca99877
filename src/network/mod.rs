//! Series/parallel networks of stocked parts.
