//! wasm-bindgen layer: translation only. (Being built.)
