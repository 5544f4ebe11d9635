//! The recipe: a versioned, declarative JSON description of an assembly
//! (components, joints, operations, requested outputs) and its executor.
//! The CLI (`mortise run`) and the page execute recipes with this code.
//! (Being built; the signatures are the contract.)

use crate::error::{Error, Result};
use crate::frf::FrfSet;
use std::collections::BTreeMap;

/// Where a recipe's files come from: the disk for the CLI, memory for the page.
pub trait FileSource {
    /// The bytes of the file the recipe names (a name relative to the recipe).
    fn read(&self, name: &str) -> Result<Vec<u8>>;
}

/// Files held in memory, by name.
#[derive(Debug, Clone, Default)]
pub struct MapSource(pub BTreeMap<String, Vec<u8>>);

impl FileSource for MapSource {
    fn read(&self, name: &str) -> Result<Vec<u8>> {
        self.0.get(name).cloned().ok_or_else(|| {
            Error::recipe(format!(
                "file '{name}' is not loaded; loaded: {}",
                self.0.keys().cloned().collect::<Vec<_>>().join(", ")
            ))
        })
    }
}

/// A parsed recipe.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Recipe {
    pub format: String,
    pub version: u32,
}

/// What a run produced.
#[derive(Debug, Clone)]
pub struct RunResult {
    /// Requested outputs, each named.
    pub outputs: Vec<FrfSet>,
    /// Conditioning, warnings, headline numbers, as JSON.
    pub report: serde_json::Value,
}

/// Parse recipe text.
pub fn parse(text: &str) -> Result<Recipe> {
    let _ = text;
    Err(Error::unsupported("recipes are not built yet"))
}

/// Execute a recipe.
pub fn run(recipe: &Recipe, files: &dyn FileSource) -> Result<RunResult> {
    let _ = (recipe, files);
    Err(Error::unsupported("recipes are not built yet"))
}
