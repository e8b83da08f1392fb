//! The built-in materials library.

use std::sync::OnceLock;

use super::{Material, Model};

/// Every built-in material, in display order.
#[must_use]
pub fn builtin() -> &'static [Material] {
    static LIB: OnceLock<Vec<Material>> = OnceLock::new();
    LIB.get_or_init(|| {
        vec![Material {
            name: "Air".into(),
            model: Model::Constant { n: 1.0, k: 0.0 },
            range_nm: None,
            source: "n = 1 (vacuum value; air's 1.0003 is neglected, common practice)".into(),
        }]
    })
}

/// The built-in material called `name` (exact match).
#[must_use]
pub fn find_builtin(name: &str) -> Option<&'static Material> {
    builtin().iter().find(|m| m.name == name)
}
