//! The menu bar and the keyboard shortcuts, from one list of actions: each [`Action`] owns its
//! label and its shortcut, so a menu entry always shows the shortcut that really works.

use egui::{Key, KeyboardShortcut, Modifiers, RichText};

use super::app::App;
use super::designs::WindowCommand;
use super::document::Command;
use super::files::FileAction;

/// Something the user can ask for from the menu (and, for some, the keyboard).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Action {
    /// Open another, empty design.
    New,
    /// Open a design file.
    Open,
    /// Save the design shown.
    Save,
    /// Save the design shown to a new file.
    SaveAs,
    /// Close the design shown.
    CloseDesign,
    /// Close the window.
    Quit,
    /// Undo the last step of the design shown.
    Undo,
    /// Redo the last undone step.
    Redo,
    /// Show or hide the targets and optimisation panel.
    Targets,
    /// Show or hide the materials browser.
    Materials,
    /// Show or hide the cautions.
    Cautions,
    /// Show or hide the export window.
    Export,
    /// Show or hide the measured-curve window.
    MeasuredCurve,
    /// Show or hide the production window.
    Production,
}

impl Action {
    /// Every action, in menu order.
    pub const ALL: [Action; 14] = [
        Action::New,
        Action::Open,
        Action::Save,
        Action::SaveAs,
        Action::CloseDesign,
        Action::Quit,
        Action::Undo,
        Action::Redo,
        Action::Targets,
        Action::Materials,
        Action::Cautions,
        Action::Export,
        Action::MeasuredCurve,
        Action::Production,
    ];

    /// The menu text.
    #[must_use]
    pub fn label(self) -> &'static str {
        match self {
            Action::New => "New",
            Action::Open => "Open…",
            Action::Save => "Save",
            Action::SaveAs => "Save as…",
            Action::CloseDesign => "Close design",
            Action::Quit => "Quit",
            Action::Undo => "Undo",
            Action::Redo => "Redo",
            Action::Targets => "Targets and optimisation",
            Action::Materials => "Materials…",
            Action::Cautions => "Cautions",
            Action::Export => "Export…",
            Action::MeasuredCurve => "Measured curve…",
            Action::Production => "Production…",
        }
    }

    /// The keyboard shortcuts, the first one shown in the menu.
    #[must_use]
    pub fn shortcuts(self) -> &'static [KeyboardShortcut] {
        const CMD: Modifiers = Modifiers::COMMAND;
        const CMD_SHIFT: Modifiers = Modifiers::COMMAND.plus(Modifiers::SHIFT);
        const NEW: [KeyboardShortcut; 1] = [KeyboardShortcut::new(CMD, Key::N)];
        const OPEN: [KeyboardShortcut; 1] = [KeyboardShortcut::new(CMD, Key::O)];
        const SAVE: [KeyboardShortcut; 1] = [KeyboardShortcut::new(CMD, Key::S)];
        const SAVE_AS: [KeyboardShortcut; 1] = [KeyboardShortcut::new(CMD_SHIFT, Key::S)];
        const CLOSE: [KeyboardShortcut; 1] = [KeyboardShortcut::new(CMD, Key::W)];
        const UNDO: [KeyboardShortcut; 1] = [KeyboardShortcut::new(CMD, Key::Z)];
        const REDO: [KeyboardShortcut; 2] = [
            KeyboardShortcut::new(CMD_SHIFT, Key::Z),
            KeyboardShortcut::new(CMD, Key::Y),
        ];
        match self {
            Action::New => &NEW,
            Action::Open => &OPEN,
            Action::Save => &SAVE,
            Action::SaveAs => &SAVE_AS,
            Action::CloseDesign => &CLOSE,
            Action::Undo => &UNDO,
            Action::Redo => &REDO,
            Action::Quit
            | Action::Targets
            | Action::Materials
            | Action::Cautions
            | Action::Export
            | Action::MeasuredCurve
            | Action::Production => &[],
        }
    }

    /// A menu button for the action, with its first shortcut beside it.
    fn button(self, ctx: &egui::Context) -> egui::Button<'static> {
        let b = egui::Button::new(self.label());
        match self.shortcuts().first() {
            Some(s) => b.shortcut_text(ctx.format_shortcut(s)),
            None => b,
        }
    }
}

impl App {
    /// Carries out `action` (as the menu or a shortcut does).
    pub fn run_action(&mut self, ctx: &egui::Context, action: Action) {
        match action {
            Action::New => self.file_action(ctx, FileAction::New),
            Action::Open => self.file_action(ctx, FileAction::OpenDialog),
            Action::Save => self.file_action(ctx, FileAction::Save),
            Action::SaveAs => self.file_action(ctx, FileAction::SaveAsDialog),
            Action::CloseDesign => self.push_window(WindowCommand::Close(self.active)),
            Action::Quit => self.file_action(ctx, FileAction::Quit),
            Action::Undo => self.push(Command::Undo),
            Action::Redo => self.push(Command::Redo),
            Action::Targets => self.windows.targets ^= true,
            Action::Materials => self.windows.materials ^= true,
            Action::Cautions => self.windows.cautions ^= true,
            Action::Export => self.export.open ^= true,
            Action::MeasuredCurve => self.measured.open ^= true,
            Action::Production => self.production.open ^= true,
        }
    }

    /// Runs the actions whose shortcut was pressed this frame. Longer shortcuts are checked
    /// first, so Ctrl+Shift+S is not taken for Ctrl+S.
    pub(super) fn handle_shortcuts(&mut self, ctx: &egui::Context) {
        let mut all: Vec<(KeyboardShortcut, Action)> = Action::ALL
            .iter()
            .flat_map(|&a| a.shortcuts().iter().map(move |&s| (s, a)))
            .collect();
        all.sort_by_key(|(s, _)| std::cmp::Reverse(s.modifiers.shift));
        let mut pressed = Vec::new();
        for (s, a) in all {
            if ctx.input_mut(|i| i.consume_shortcut(&s)) && !pressed.contains(&a) {
                pressed.push(a);
            }
        }
        for a in pressed {
            self.run_action(ctx, a);
        }
    }

    pub(super) fn menu_ui(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        let mut chosen = None;
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                for a in [Action::New, Action::Open] {
                    if ui.add(a.button(&ctx)).clicked() {
                        chosen = Some(a);
                    }
                }
                ui.menu_button("Open recent", |ui| {
                    if self.recent.is_empty() {
                        ui.label("no recent files");
                    }
                    for p in self.recent.clone() {
                        if ui.button(p.display().to_string()).clicked() {
                            self.file_action(&ctx, FileAction::Open(p));
                        }
                    }
                });
                for a in [Action::Save, Action::SaveAs, Action::CloseDesign] {
                    if ui.add(a.button(&ctx)).clicked() {
                        chosen = Some(a);
                    }
                }
                ui.checkbox(&mut self.own_chooser, "Use Stackwise's own file chooser")
                    .on_hover_text(
                        "Choose files in a window drawn by Stackwise instead of the \
                         desktop's dialog",
                    );
                ui.separator();
                if ui.add(Action::Quit.button(&ctx)).clicked() {
                    chosen = Some(Action::Quit);
                }
            });
            ui.menu_button("Edit", |ui| {
                let doc = self.doc();
                let can = [
                    (Action::Undo, doc.can_undo()),
                    (Action::Redo, doc.can_redo()),
                ];
                for (a, enabled) in can {
                    if ui.add_enabled(enabled, a.button(&ctx)).clicked() {
                        chosen = Some(a);
                    }
                }
            });
            for a in [
                Action::Targets,
                Action::Materials,
                Action::Cautions,
                Action::Export,
                Action::MeasuredCurve,
                Action::Production,
            ] {
                if ui.button(a.label()).clicked() {
                    chosen = Some(a);
                }
            }
            ui.separator();
            let file = self
                .doc()
                .path()
                .map_or_else(|| "not saved yet".to_owned(), |p| p.display().to_string());
            ui.label(RichText::new(file).weak());
        });
        if let Some(a) = chosen {
            self.run_action(&ctx, a);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_two_actions_share_a_shortcut() {
        let mut seen: Vec<KeyboardShortcut> = Vec::new();
        for a in Action::ALL {
            for s in a.shortcuts() {
                assert!(!seen.contains(s), "{a:?} reuses {s:?}");
                seen.push(*s);
            }
        }
        assert_eq!(seen.len(), 8, "every shortcut counted");
    }
}
