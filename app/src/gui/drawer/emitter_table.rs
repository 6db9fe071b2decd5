//! The emitters tab: one row per emitter with its results, and the room
//! data typed in place — name, heat load, room temperature and a fixed
//! presetting. A value is checked as the inspector checks it (the ranges
//! of `project::limits`, then the core's own `validate_node_kind`), and a
//! refused one keeps its text, turns red and says why above the table.

use std::collections::BTreeMap;

use egui::{RichText, TextEdit, Ui};
use flowrise_core::design::{FindingKind, ItemRef, Solution};
use flowrise_core::project::edit::validate_node_kind;
use flowrise_core::project::limits as L;
use flowrise_core::project::{Edit, Emitter, NodeId, NodeKind, Project};

use super::{cell_label, virtual_table};
use crate::gui::fields::parse_number;
use crate::gui::intents::Intents;
use crate::gui::theme;

/// The editable columns.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Col {
    /// Emitter name.
    Name,
    /// Heat load, W.
    Load,
    /// Room temperature, °C.
    Room,
    /// Fixed presetting (empty: chosen by the design).
    Presetting,
}

impl Col {
    /// Words for the accessible name and messages.
    #[must_use]
    pub fn words(self) -> &'static str {
        match self {
            Self::Name => "name",
            Self::Load => "heat load",
            Self::Room => "room temperature",
            Self::Presetting => "presetting",
        }
    }
}

/// Text being typed in the table, and the last refusal (transient).
#[derive(Debug, Default)]
pub struct TableEdits {
    /// Text of cells being edited or refused.
    buffers: BTreeMap<(NodeId, Col), String>,
    /// The cell with the keyboard.
    focused: Option<(NodeId, Col)>,
    /// The last refused cell and why.
    pub error: Option<((NodeId, Col), String)>,
    /// A cell to give the keyboard on the next frame.
    want_focus: Option<(NodeId, Col)>,
}

/// The new emitter data for `text` typed in `col`, checked.
///
/// # Errors
/// The reason, naming the value and the accepted range or steps.
pub fn edited(e: &Emitter, label: &str, col: Col, text: &str) -> Result<Emitter, String> {
    let mut e2 = e.clone();
    match col {
        Col::Name => {
            if text.is_empty() {
                return Err("the name is empty — give a name".to_owned());
            }
            text.clone_into(&mut e2.name);
        }
        Col::Load => e2.load_w = parse_number(text, "W", L::LOAD_W.scaled(1.0))?,
        Col::Room => e2.room_c = parse_number(text, "°C", L::ROOM_C.scaled(1.0))?,
        Col::Presetting => {
            if text.is_empty() {
                e2.valves.presetting = None;
            } else {
                let family = flowrise_core::valves::valve_family(&e.valves.valve_family).map_err(|x| x.to_string())?;
                let Some(step) = family.settings.iter().find(|s| s.label.eq_ignore_ascii_case(text)) else {
                    let steps: Vec<&str> = family.settings.iter().map(|s| s.label.as_str()).collect();
                    return Err(format!(
                        "“{text}” is not a presetting of {} — give one of {}, or leave it empty to let the design choose",
                        family.name,
                        steps.join(", ")
                    ));
                };
                e2.valves.presetting = Some(step.label.clone());
            }
        }
    }
    validate_node_kind(label, &NodeKind::Emitter(e2.clone())).map_err(|x| x.to_string())?;
    Ok(e2)
}

impl TableEdits {
    /// An editable cell; returns the committed text when it changed.
    fn cell(&mut self, ui: &mut Ui, key: (NodeId, Col), current: &str, name: &str) -> Option<String> {
        let kept = self.focused == Some(key) || self.error.as_ref().is_some_and(|(k, _)| *k == key);
        let mut text = if kept { self.buffers.get(&key).cloned().unwrap_or_default() } else { current.to_owned() };
        let refused = self.error.as_ref().is_some_and(|(k, _)| *k == key);
        let mut edit =
            TextEdit::singleline(&mut text).id_salt(("emitter_cell", key.0.0, key.1)).desired_width(f32::INFINITY);
        if refused {
            edit = edit.text_color(theme::ERROR);
        }
        let resp = ui.add(edit).accessible_name(format!("{} of {name}", key.1.words()));
        if self.want_focus == Some(key) {
            self.want_focus = None;
            resp.request_focus();
            self.buffers.insert(key, text);
            return None;
        }
        if resp.has_focus() {
            self.focused = Some(key);
            self.buffers.insert(key, text.clone());
        } else if self.focused == Some(key) {
            self.focused = None;
        }
        let committed = resp.lost_focus() && text.trim() != current.trim();
        if !resp.has_focus() && !refused {
            self.buffers.remove(&key);
        }
        if resp.lost_focus() && text.trim() == current.trim() && refused {
            self.error = None;
            self.buffers.remove(&key);
        }
        committed.then(|| text.trim().to_owned())
    }
}

/// Show the tab.
pub fn show(ui: &mut Ui, project: &Project, sol: &Solution, st: &mut TableEdits, out: &mut Intents) {
    const COLUMNS: [(&str, f32); 13] = [
        ("", 44.0),
        ("Emitter", 150.0),
        ("Level", 95.0),
        ("Load W", 64.0),
        ("Room °C", 58.0),
        ("Output W", 68.0),
        ("Design l/h", 72.0),
        ("Flow l/h", 104.0),
        ("Return °C", 70.0),
        ("Presetting", 72.0),
        ("Lockshield", 72.0),
        ("Authority", 66.0),
        ("Circuit kPa", 76.0),
    ];
    match &st.error {
        Some(((id, col), why)) => {
            let who = project.node(*id).map_or_else(|| id.to_string(), flowrise_core::project::Node::label);
            ui.label(RichText::new(format!("{who}, {}: {why}", col.words())).color(theme::ERROR));
        }
        None => {
            ui.label(
                RichText::new("Name, load, room temperature and presetting can be typed here (Enter to apply; an empty presetting lets the design choose).")
                    .small()
                    .weak(),
            );
        }
    }
    virtual_table(ui, "emitters_table", &COLUMNS, sol.emitters.len(), |ui, r, c| {
        let Some(e) = sol.emitters.get(r) else { return };
        let data = project.node(e.id).and_then(|n| match &n.kind {
            NodeKind::Emitter(x) => Some((n.label(), x)),
            _ => None,
        });
        let data = data.as_ref().map(|(l, x)| (l.as_str(), *x));
        let id = e.id;
        match c {
            0 => {
                let mark = if sol.index_emitter == Some(e.id) { "index" } else { "show" };
                if ui.small_button(mark).on_hover_text("Select and centre on the plan").clicked() {
                    out.centre_on = Some(ItemRef::Node(e.id));
                }
            }
            1 => {
                commit(ui, st, out, id, data, Col::Name, data.map_or_else(|| e.name.to_string(), |d| d.1.name.clone()))
            }
            2 => {
                cell_label(ui, &*e.level);
            }
            3 => commit(ui, st, out, id, data, Col::Load, format!("{:.0}", data.map_or(e.load_w, |d| d.1.load_w))),
            4 => commit(ui, st, out, id, data, Col::Room, format!("{:.1}", data.map_or(e.room_c, |d| d.1.room_c))),
            5 => {
                // Every warning colour here has a finding behind it.
                let o = RichText::new(format!("{:.0}", e.output_w));
                let short = sol.has_finding(ItemRef::Node(e.id), &FindingKind::OUTPUT_SHORT);
                cell_label(ui, if short { o.color(theme::ERROR) } else { o });
            }
            6 => {
                cell_label(ui, format!("{:.1}", e.design_flow_l_h));
            }
            7 => {
                let f = RichText::new(format!("{:.1} ({:+.0} %)", e.flow_l_h, e.flow_deviation * 100.0));
                let off = sol.has_finding(ItemRef::Node(e.id), &[FindingKind::FlowOutOfTolerance]);
                cell_label(ui, if off { f.color(theme::ERROR) } else { f });
            }
            8 => {
                let t = RichText::new(format!("{:.1}", e.return_c));
                let hot = sol.has_finding(ItemRef::Node(e.id), &[FindingKind::HotReturn]);
                cell_label(ui, if hot { t.color(theme::WARNING) } else { t });
            }
            9 => {
                // The fixed presetting is typed; the design's choice shows when none is fixed.
                let fixed = data.and_then(|d| d.1.valves.presetting.clone());
                let key = (e.id, Col::Presetting);
                if fixed.is_some() || st.focused == Some(key) || st.error.as_ref().is_some_and(|(k, _)| *k == key) {
                    commit(ui, st, out, id, data, Col::Presetting, fixed.unwrap_or_default());
                } else {
                    let resp = ui
                        .add(egui::Button::new(RichText::new(&*e.presetting).italics()).frame(false))
                        .on_hover_text("Chosen by the design — click to fix a presetting");
                    if resp.clicked() {
                        st.focused = Some(key);
                        st.want_focus = Some(key);
                        st.buffers.insert(key, e.presetting.to_string());
                    }
                }
            }
            10 => {
                cell_label(ui, &*e.lockshield);
            }
            11 => {
                let a = RichText::new(format!("{:.2}", e.authority));
                let low = sol.has_finding(ItemRef::Node(e.id), &[FindingKind::LowAuthority]);
                cell_label(ui, if low { a.color(theme::WARNING) } else { a });
            }
            _ => {
                cell_label(ui, format!("{:.1}", e.circuit_dp_open_pa / 1000.0));
            }
        }
    });
}

/// An editable cell: on a committed text, the checked edit or the reason.
#[allow(clippy::too_many_arguments)] // reason: the cell, its row and where its answer goes
fn commit(
    ui: &mut Ui,
    st: &mut TableEdits,
    out: &mut Intents,
    id: NodeId,
    data: Option<(&str, &Emitter)>,
    col: Col,
    current: String,
) {
    let Some((label, em)) = data else {
        cell_label(ui, current);
        return;
    };
    let key = (id, col);
    if let Some(text) = st.cell(ui, key, &current, &em.name) {
        match edited(em, label, col, &text) {
            Ok(e2) => {
                st.error = None;
                st.buffers.remove(&key);
                out.edit(Edit::SetNodeKind { id, kind: NodeKind::Emitter(e2) });
            }
            Err(why) => {
                st.buffers.insert(key, text);
                st.error = Some((key, why));
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use flowrise_core::emitters::EmitterKind;
    use flowrise_core::project::EmitterValves;

    fn emitter() -> Emitter {
        Emitter {
            name: "Kitchen".to_owned(),
            room_c: 20.0,
            load_w: 800.0,
            model: EmitterKind::Radiator.default_model(),
            valves: EmitterValves {
                valve_family: "trv-demo-fine".to_owned(),
                presetting: None,
                lockshield_family: "lockshield-demo".to_owned(),
                lockshield_setting: None,
            },
        }
    }

    #[test]
    fn values_are_checked_as_in_the_inspector_and_refusals_say_why() {
        let e = emitter();
        let load = edited(&e, "Kitchen", Col::Load, "1200,5").unwrap().load_w;
        assert!((load - 1200.5).abs() < 1e-9, "{load}");
        assert!(edited(&e, "Kitchen", Col::Load, "-4").unwrap_err().contains("out of range"));
        assert!(edited(&e, "Kitchen", Col::Room, "45").unwrap_err().contains("out of range"));
        assert!(edited(&e, "Kitchen", Col::Name, "Bad\tname").unwrap_err().contains("control character"));
        let wrong = edited(&e, "Kitchen", Col::Presetting, "99").unwrap_err();
        assert!(wrong.contains("not a presetting"), "{wrong}");
        let fam = flowrise_core::valves::valve_family("trv-demo-fine").unwrap();
        let step = &fam.settings[1].label;
        assert_eq!(edited(&e, "Kitchen", Col::Presetting, step).unwrap().valves.presetting.as_ref(), Some(step));
        assert_eq!(edited(&e, "Kitchen", Col::Presetting, "").unwrap().valves.presetting, None);
    }
}
