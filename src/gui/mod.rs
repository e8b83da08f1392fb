//! The design window.
//!
//! Layout: a menu bar; a tab strip of the open designs ([`designs`]); the active design's
//! stack on the left ([`stack`]); in the centre either the spectrum and angle views
//! ([`plots`], with other designs overlaid on request) or the compare view ([`compare`]); a
//! status line at the bottom. Panels read state and push [`Command`]s (edits of the active
//! design) or [`WindowCommand`]s (which design is shown, overlaid, compared or closed);
//! [`App::apply`] and [`App::apply_window`] carry them out at the end of the frame. A finished
//! gesture (no drag, no text field being edited) becomes one undo step of the design edited.
//! Results are cached per design revision and sweep ([`compute`]); slow sweeps, file dialogs
//! and file reads run as [`jobs`].
//!
//! The `App` is split by concern: its state and frame (`app.rs`), carrying out commands
//! (`apply.rs`), file actions, choosers and the unsaved-changes question (`files.rs`, with the
//! window's own chooser in [`chooser`]), autosave and recovery (`recovery.rs`), the menu and
//! shortcuts (`menu.rs`, one [`Action`] per entry) and the status line, cautions and problem
//! window (`status.rs`).
//!
//! Each open design keeps its own file, undo history, unsaved mark, caches and colour. New and
//! Open add a design; closing one with unsaved changes asks first, and closing the window asks
//! about every unsaved design in turn. Autosave writes one recovery file per unsaved design
//! (`recovery-<session>-<n>.ron` in the recovery folder); all are offered at the next start.

mod app;
mod apply;
pub mod chooser;
pub mod compare;
pub mod compute;
pub mod designs;
pub mod document;
pub mod export_window;
mod files;
pub mod history;
pub mod jobs;
pub mod materials;
pub mod measured;
mod menu;
pub mod optimize;
pub mod plots;
pub mod production;
mod recovery;
mod section;
pub mod stack;
mod status;
pub mod targets;
pub mod theme;
pub mod views;

use std::path::PathBuf;
use std::time::Duration;

use anyhow::Result;

use crate::design::{Design, Layer, Nm, file};

pub use app::{App, CentralView};
pub use compare::CompareSettings;
pub use compute::{SweepCache, SweepResult};
pub use designs::{DesignId, OpenDesign, WindowCommand};
pub use document::{Command, CommandError, Document, Edit};
pub use files::FileAction;
pub use history::History;
pub use menu::Action;
pub use plots::ViewSettings;
pub use stack::StackUi;

/// Key under which window preferences (recent files) live in eframe storage.
pub const APP_KEY: &str = eframe::APP_KEY;

/// Unsaved work is written to the recovery file this long after the last edit.
pub const AUTOSAVE_DELAY: Duration = Duration::from_secs(3);

/// Opens the window with the designs at `paths` (each in its own tab), or a demo design.
pub fn run(paths: Vec<PathBuf>) -> Result<()> {
    let options = eframe::NativeOptions {
        viewport: egui::ViewportBuilder::default()
            .with_inner_size([1400.0, 900.0])
            .with_min_inner_size([800.0, 500.0])
            .with_title("Stackwise")
            .with_drag_and_drop(true),
        renderer: eframe::Renderer::Glow,
        ..Default::default()
    };
    eframe::run_native(
        "Stackwise",
        options,
        Box::new(move |cc| {
            let mut paths = paths.into_iter();
            let mut app = App::new(paths.next());
            for p in paths {
                app.apply(Command::Open(p));
            }
            app.recovery_dir = eframe::storage_dir("Stackwise").map(|d| d.join("recovery"));
            app.check_recovery();
            if let Some(storage) = cc.storage
                && let Some(prefs) = eframe::get_value::<Prefs>(storage, APP_KEY)
            {
                app.recent = prefs.recent;
            }
            Ok(Box::new(app))
        }),
    )
    .map_err(|e| anyhow::anyhow!("cannot open the window: {e}"))
}

/// Window preferences kept in eframe storage (never designs).
#[derive(Clone, Debug, Default, serde::Serialize, serde::Deserialize)]
pub(crate) struct Prefs {
    pub(crate) recent: Vec<PathBuf>,
}

/// The example design shown when no file is given.
const DEMO_RON: &str = include_str!("../../designs/camera-window-ar.ron");

/// The demo design: the camera-window AR example, or (should that ever fail to read) a
/// four-layer TiO2/SiO2 anti-reflection coating on fused silica built here.
#[must_use]
pub fn demo_design() -> Design {
    match file::from_ron_str(DEMO_RON) {
        Ok(d) => d,
        Err(e) => {
            log::error!("the embedded demo design does not read: {e}");
            fallback_demo()
        }
    }
}

fn fallback_demo() -> Design {
    let mut d = Design::new_empty("Demo: visible AR on fused silica");
    d.reference_nm = 550.0;
    // Substrate side first: a thin high/low pair, then a thick high and a quarter-wave low.
    for (m, nm) in [
        ("TiO2", 12.0),
        ("SiO2", 36.0),
        ("TiO2", 112.0),
        ("SiO2", 92.0),
    ] {
        if let Ok(nm) = Nm::new(nm) {
            d.layers.push(Layer::new(m, nm));
        }
    }
    d
}
