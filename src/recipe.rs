//! The recipe: a versioned declarative description of an assembly, and its executor. (Being built.)
