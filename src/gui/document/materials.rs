//! The design's own materials: adding, replacing (layers and media follow a rename) and
//! removing (refused while anything uses the material).

use crate::material::Material;

use super::{CommandError, Document};

impl Document {
    pub(super) fn add_material(&mut self, m: Material) -> Result<(), CommandError> {
        if m.name.trim().is_empty() {
            return Err(CommandError::Materials(
                "a material needs a name".to_owned(),
            ));
        }
        if self.design.materials.iter().any(|x| x.name == m.name) {
            return Err(CommandError::Materials(format!(
                "the design already defines {:?}; replace it or pick another name",
                m.name
            )));
        }
        m.validate().map_err(|source| CommandError::Material {
            place: "new material".into(),
            source,
        })?;
        self.design.materials.push(m);
        Ok(())
    }

    pub(super) fn replace_material(&mut self, old: &str, m: Material) -> Result<(), CommandError> {
        m.validate().map_err(|source| CommandError::Material {
            place: format!("material {old:?}"),
            source,
        })?;
        if m.name != old && self.design.materials.iter().any(|x| x.name == m.name) {
            return Err(CommandError::Materials(format!(
                "the design already defines {:?}; pick another name",
                m.name
            )));
        }
        let d = &mut self.design;
        let new_name = m.name.clone();
        match d.materials.iter_mut().find(|x| x.name == old) {
            Some(slot) => *slot = m,
            None => d.materials.push(m),
        }
        if new_name != old {
            for name in d.layers.iter_mut().map(|l| &mut l.material).chain([
                &mut d.incident,
                &mut d.substrate,
                &mut d.exit,
            ]) {
                if name == old {
                    name.clone_from(&new_name);
                }
            }
        }
        Ok(())
    }

    pub(super) fn remove_material(&mut self, name: &str) -> Result<(), CommandError> {
        let Some(pos) = self.design.materials.iter().position(|m| m.name == name) else {
            return Err(CommandError::Materials(format!(
                "the design defines no material {name:?}"
            )));
        };
        let d = &self.design;
        let shadows_builtin = crate::material::find_builtin(name).is_some();
        let users: Vec<String> = d
            .layers
            .iter()
            .enumerate()
            .filter(|(_, l)| l.material == name)
            .map(|(i, _)| format!("layer {}", i + 1))
            .chain(
                [
                    ("incident medium", &d.incident),
                    ("substrate", &d.substrate),
                    ("exit medium", &d.exit),
                ]
                .into_iter()
                .filter(|(_, m)| *m == name)
                .map(|(p, _)| p.to_owned()),
            )
            .collect();
        if !users.is_empty() && !shadows_builtin {
            return Err(CommandError::Materials(format!(
                "{name:?} is still used by {}; change those first",
                users.join(", ")
            )));
        }
        self.design.materials.remove(pos);
        Ok(())
    }
}
