//! Built-in catalogue of generic fibre-film ribbon materials (`materials.json`): density,
//! strength, knock-downs and notch model, each value with its basis ([MEMORY] or a source;
//! "engineering assumption" where nothing better exists). No trade names.

use serde::Deserialize;
use std::collections::BTreeMap;

use super::error::ScenarioError;
use super::spec::MaterialSpec;

/// The catalogue file's text.
pub const MATERIALS_JSON: &str = include_str!("materials.json");

/// One catalogue entry.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CatalogueEntry {
    /// Short key (`pbo`, `para_aramid`, `uhmwpe`, `carbon_nanotube_film`, `polyimide`).
    pub key: String,
    /// The material as a scenario writes it.
    pub material: MaterialSpec,
    /// Basis of each value, by field name.
    pub basis: BTreeMap<String, String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct CatalogueFile {
    #[allow(dead_code)]
    note: String,
    materials: Vec<CatalogueEntry>,
}

/// The built-in material catalogue.
///
/// # Errors
/// [`ScenarioError::Model`] if the embedded file does not parse (a build defect; tested).
pub fn material_catalogue() -> Result<Vec<CatalogueEntry>, ScenarioError> {
    serde_json::from_str::<CatalogueFile>(MATERIALS_JSON)
        .map(|f| f.materials)
        .map_err(|e| ScenarioError::Model {
            path: "materials.json".into(),
            message: e.to_string(),
        })
}

/// The catalogue entry with this key.
pub fn catalogue_material(key: &str) -> Option<CatalogueEntry> {
    material_catalogue()
        .ok()?
        .into_iter()
        .find(|e| e.key == key)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::{Scenario, ScenarioSpec};

    #[test]
    fn every_entry_validates_and_documents_every_value() {
        let entries = material_catalogue().unwrap();
        let keys: Vec<&str> = entries.iter().map(|e| e.key.as_str()).collect();
        assert_eq!(
            keys,
            [
                "pbo",
                "para_aramid",
                "uhmwpe",
                "carbon_nanotube_film",
                "polyimide"
            ]
        );
        let demo: ScenarioSpec = serde_json::from_str(crate::scenario::DEMO_SCENARIO_JSON).unwrap();
        for e in entries {
            for field in [
                "ultimate_strength_gpa",
                "density_g_per_cm3",
                "strength_knockdowns",
                "notch_model",
            ] {
                let b = e.basis.get(field).map(|s| s.trim()).unwrap_or("");
                assert!(!b.is_empty(), "{}: no basis for {field}", e.key);
            }
            let mut spec = demo.clone();
            spec.tether.material = e.material.clone();
            Scenario::from_spec(spec, None).unwrap_or_else(|err| panic!("{}: {err}", e.key));
        }
    }
}
