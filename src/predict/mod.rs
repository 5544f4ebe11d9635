//! Operational prediction, path contributions, blocked forces, variants. (Being built.)
