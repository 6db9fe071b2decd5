//! Design settings of a project.
//!
//! Limits marked "common practice" are rules of thumb of the trade, not code
//! requirements; the user can change every one of them.

use serde::{Deserialize, Serialize};

use super::limits::{self, Limit};

/// Class of a pipe run; each class has its own velocity limit and series.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub enum PipeClass {
    /// Risers and mains from the source to the floors.
    Main,
    /// Floor branches between the riser and the rooms.
    Branch,
    /// The last run to an emitter (next to the room: noise matters).
    Connection,
}

impl PipeClass {
    /// All classes, in display order.
    pub const ALL: [Self; 3] = [Self::Main, Self::Branch, Self::Connection];

    /// Display name.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Self::Main => "riser / main",
            Self::Branch => "branch",
            Self::Connection => "emitter connection",
        }
    }
}

/// How the return pipe of a branch is laid.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
pub enum ReturnLayout {
    /// The return runs back the way the supply came (first emitter = shortest
    /// circuit).
    #[default]
    Direct,
    /// The return continues in the supply's direction and comes back from the
    /// last emitter, so all circuits have about equal length.
    Reverse,
}

/// What an edit does to sizes and presettings.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
pub enum Mode {
    /// Sizes and presettings are re-chosen on every edit.
    #[default]
    DesignFollowsLayout,
    /// Sizes and presettings are frozen; the operating solve shows how the
    /// real flows move.
    Installed,
}

/// A value per pipe class.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PerClass<T> {
    /// Risers and mains.
    pub main: T,
    /// Floor branches.
    pub branch: T,
    /// Emitter connections.
    pub connection: T,
}

impl<T> PerClass<T> {
    /// The value for `class`.
    pub fn get(&self, class: PipeClass) -> &T {
        match class {
            PipeClass::Main => &self.main,
            PipeClass::Branch => &self.branch,
            PipeClass::Connection => &self.connection,
        }
    }
    /// The value for `class`, mutable.
    pub fn get_mut(&mut self, class: PipeClass) -> &mut T {
        match class {
            PipeClass::Main => &mut self.main,
            PipeClass::Branch => &mut self.branch,
            PipeClass::Connection => &mut self.connection,
        }
    }
}

/// Design settings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
#[serde(deny_unknown_fields)]
pub struct DesignSettings {
    /// Design supply temperature at the source, °C.
    pub supply_c: f64,
    /// Design return temperature, °C.
    pub return_c: f64,
    /// Default room temperature for new emitters, °C.
    pub room_c: f64,
    /// Velocity limit per pipe class, m/s. Defaults 1.2 / 0.8 / 0.5 m/s:
    /// common practice (lower next to rooms for noise).
    pub velocity_limit_m_s: PerClass<f64>,
    /// Share of the velocity limit kept in reserve when pipes are sized,
    /// fraction (default 0: sized up to the limit). The operating flows of
    /// a balanced network run a little above design (the design's
    /// conservative friction law, stepped presettings), and the velocity
    /// is checked again at them: a pipe sized right at its limit can end a
    /// fraction of a per cent over it. A reserve of a few per cent keeps
    /// such pipes inside; where no size of the series meets the reduced
    /// limit, the limit itself applies.
    pub velocity_reserve_fraction: f64,
    /// Pressure-gradient limit for sizing, Pa/m. Default 150 Pa/m: common
    /// practice (100–200 Pa/m).
    pub gradient_limit_pa_m: f64,
    /// Pressure-gradient limit for the pipes inside a branch held by a
    /// differential-pressure controller (the controlled run and everything
    /// it feeds), Pa/m; `None` = the general limit. A lower limit there
    /// keeps the branch's own pipes a small share of the Δp the controller
    /// holds, so the radiator valves keep their authority and the rooms
    /// left open when others close see little more than their design Δp
    /// (common practice: the valves' authority inside a controlled branch
    /// about 0.5 or more).
    pub controlled_gradient_limit_pa_m: Option<f64>,
    /// Pipe series id per class.
    pub series: PerClass<String>,
    /// Margin added to the index-circuit pressure drop for the pump head,
    /// fraction (default 0.10: common practice).
    pub head_margin_fraction: f64,
    /// Return layout where a run does not say otherwise.
    pub return_layout: ReturnLayout,
    /// Design follows layout, or installed.
    pub mode: Mode,
    /// Default radiator valve family for new emitters.
    pub valve_family: String,
    /// Default lockshield family for new emitters.
    pub lockshield_family: String,
    /// Minimum pressure drop across a radiator valve at design flow, Pa, for
    /// the index circuit's valve (default 5 kPa: common practice, gives the
    /// index valve an authority of about 0.3–0.5).
    pub min_valve_dp_pa: f64,
    /// Temperature of the water when the system is filled, °C (expansion).
    pub fill_temperature_c: f64,
    /// Static height of the highest point of the system above the
    /// expansion vessel, m; `None` = from the levels.
    pub static_height_m: Option<f64>,
    /// Safety valve set pressure, bar gauge.
    pub safety_valve_bar: f64,
    /// Accepted deviation of an emitter's (or balancing device's) flow from
    /// its design flow, fraction (default ±10 %: common practice for a
    /// balanced two-pipe system). Outside it is a finding.
    pub flow_tolerance_fraction: f64,
    /// How far an emitter's return may lie above the design return before
    /// it is a finding, K (default 3 K: common practice; a hot return is
    /// an emitter oversupplied or throttled only by its valve).
    pub hot_return_margin_k: f64,
    /// Smallest water temperature drop an existing (checked) emitter may
    /// run at, K: its flow cap. Default 1 K ([`crate::emitters::MIN_WATER_DELTA_K`],
    /// the practical cap of any emitter); the supply-temperature sweep sets
    /// its own (5 K for a heat pump, common practice).
    pub min_water_drop_k: f64,
}

impl Default for DesignSettings {
    fn default() -> Self {
        Self {
            supply_c: 70.0,
            return_c: 55.0,
            room_c: 20.0,
            velocity_limit_m_s: PerClass { main: 1.2, branch: 0.8, connection: 0.5 },
            velocity_reserve_fraction: 0.0,
            gradient_limit_pa_m: 150.0,
            controlled_gradient_limit_pa_m: None,
            series: PerClass {
                main: "steel-en10255-medium".to_owned(),
                branch: "multilayer-iso21003".to_owned(),
                connection: "multilayer-iso21003".to_owned(),
            },
            head_margin_fraction: 0.10,
            return_layout: ReturnLayout::Direct,
            mode: Mode::DesignFollowsLayout,
            valve_family: "trv-demo-8".to_owned(),
            lockshield_family: "lockshield-demo".to_owned(),
            min_valve_dp_pa: 5_000.0,
            fill_temperature_c: 10.0,
            static_height_m: None,
            safety_valve_bar: 3.0,
            flow_tolerance_fraction: 0.10,
            hot_return_margin_k: 3.0,
            min_water_drop_k: crate::emitters::MIN_WATER_DELTA_K,
        }
    }
}

impl DesignSettings {
    /// The pressure-gradient limit of a pipe, Pa/m: inside a branch held by
    /// a differential-pressure controller the lower of the general limit
    /// and [`Self::controlled_gradient_limit_pa_m`], else the general one.
    #[must_use]
    pub fn gradient_limit_for(&self, behind_controller: bool) -> f64 {
        match self.controlled_gradient_limit_pa_m {
            Some(g) if behind_controller => g.min(self.gradient_limit_pa_m),
            _ => self.gradient_limit_pa_m,
        }
    }
}

/// A problem with the settings, naming the field and the fix.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SettingsProblem {
    /// Field name as shown in the settings panel.
    pub field: &'static str,
    /// What is wrong and how to fix it.
    pub message: String,
}

impl DesignSettings {
    /// Check the settings; every problem names its field and the fix.
    #[must_use]
    pub fn problems(&self) -> Vec<SettingsProblem> {
        let mut out = Vec::new();
        let mut bad = |field: &'static str, message: String| out.push(SettingsProblem { field, message });
        let outside = |l: &Limit, v: f64| format!("{} {} is outside {}", limits::readable(v), l.unit, l.range_text());
        if !limits::SUPPLY_C.contains(self.supply_c) {
            bad("supply temperature", outside(&limits::SUPPLY_C, self.supply_c));
        }
        if !limits::RETURN_C.contains(self.return_c) {
            bad("return temperature", outside(&limits::RETURN_C, self.return_c));
        }
        if self.return_c >= self.supply_c {
            bad(
                "return temperature",
                format!(
                    "return {} °C must be below supply {} °C — lower the return or raise the supply",
                    limits::readable(self.return_c),
                    limits::readable(self.supply_c)
                ),
            );
        }
        if !limits::ROOM_C.contains(self.room_c) {
            bad("room temperature", outside(&limits::ROOM_C, self.room_c));
        } else if self.room_c >= self.return_c {
            bad(
                "room temperature",
                format!(
                    "room {} °C must be below the return {} °C",
                    limits::readable(self.room_c),
                    limits::readable(self.return_c)
                ),
            );
        }
        for class in PipeClass::ALL {
            let v = *self.velocity_limit_m_s.get(class);
            if !limits::VELOCITY_LIMIT_M_S.contains(v) {
                bad("velocity limit", format!("{}: {}", class.name(), outside(&limits::VELOCITY_LIMIT_M_S, v)));
            }
        }
        if !limits::VELOCITY_RESERVE_FRACTION.contains(self.velocity_reserve_fraction) {
            bad(
                "velocity sizing reserve",
                format!("{} % is outside 0 to 30 %", limits::readable(self.velocity_reserve_fraction * 100.0)),
            );
        }
        if !limits::GRADIENT_LIMIT_PA_M.contains(self.gradient_limit_pa_m) {
            bad("pressure gradient limit", outside(&limits::GRADIENT_LIMIT_PA_M, self.gradient_limit_pa_m));
        }
        if let Some(g) = self.controlled_gradient_limit_pa_m
            && !limits::GRADIENT_LIMIT_PA_M.contains(g)
        {
            bad("gradient limit behind Δp controllers", outside(&limits::GRADIENT_LIMIT_PA_M, g));
        }
        if !limits::HEAD_MARGIN_FRACTION.contains(self.head_margin_fraction) {
            bad(
                "pump head margin",
                format!("{} % is outside 0 to 100 %", limits::readable(self.head_margin_fraction * 100.0)),
            );
        }
        if !limits::MIN_VALVE_DP_PA.contains(self.min_valve_dp_pa) {
            bad("minimum valve Δp", outside(&limits::MIN_VALVE_DP_PA, self.min_valve_dp_pa));
        }
        if !limits::FILL_TEMPERATURE_C.contains(self.fill_temperature_c) {
            bad("fill temperature", outside(&limits::FILL_TEMPERATURE_C, self.fill_temperature_c));
        }
        if let Some(h) = self.static_height_m
            && !limits::STATIC_HEIGHT_M.contains(h)
        {
            bad("static height", outside(&limits::STATIC_HEIGHT_M, h));
        }
        if !limits::SAFETY_VALVE_BAR.contains(self.safety_valve_bar) {
            bad("safety valve pressure", outside(&limits::SAFETY_VALVE_BAR, self.safety_valve_bar));
        }
        if !limits::FLOW_TOLERANCE_FRACTION.contains(self.flow_tolerance_fraction) {
            bad(
                "flow tolerance",
                format!("±{} % is outside ±1 to ±50 %", limits::readable(self.flow_tolerance_fraction * 100.0)),
            );
        }
        if !limits::MIN_WATER_DROP_K.contains(self.min_water_drop_k) {
            bad("minimum water temperature drop", outside(&limits::MIN_WATER_DROP_K, self.min_water_drop_k));
        }
        if !limits::HOT_RETURN_MARGIN_K.contains(self.hot_return_margin_k) {
            bad("hot-return margin", outside(&limits::HOT_RETURN_MARGIN_K, self.hot_return_margin_k));
        }
        let texts = [
            ("pipe series (main)", &self.series.main),
            ("pipe series (branch)", &self.series.branch),
            ("pipe series (connection)", &self.series.connection),
            ("valve family", &self.valve_family),
            ("lockshield family", &self.lockshield_family),
        ];
        for (field, text) in texts {
            if let Err(super::EditError::Invalid { message, .. }) = super::edit::check_text("settings", "id", text) {
                bad(field, message);
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_are_valid_and_impossible_temperatures_are_named() {
        assert!(DesignSettings::default().problems().is_empty());
        let s = DesignSettings { return_c: 75.0, ..DesignSettings::default() };
        let p = s.problems();
        assert!(p.iter().any(|p| p.field == "return temperature" && p.message.contains("below supply")), "{p:?}");
        let s = DesignSettings { supply_c: f64::NAN, ..DesignSettings::default() };
        assert!(s.problems().iter().any(|p| p.field == "supply temperature"));
        let s = DesignSettings { velocity_reserve_fraction: 0.5, ..DesignSettings::default() };
        let p = s.problems();
        assert!(p.iter().any(|p| p.field == "velocity sizing reserve" && p.message.contains("50 %")), "{p:?}");
    }
}
