//! Getting a step's set-up in place: a person told what to do who confirms with Enter, or the
//! virtual rig's scene moved to match (which is how each step is played against known truth).

use crate::event::Notice;
use std::sync::mpsc::Receiver;

use remanent_physics::boiling;
use remanent_rig_model::{Magnet, Scene};

use super::steps::{Pressure, Step};
use crate::virtual_rig::SceneControl;

/// Puts the sensors where a step needs them.
pub trait Setup {
    /// Arrange `step`'s set-up; `note` speaks to the user.
    fn arrange(&mut self, step: &Step, note: &mut dyn FnMut(&Notice)) -> Result<(), String>;
    /// The step has read what it needs.
    fn release(&mut self);
}

/// A person at a real bench, confirming each set-up with Enter.
pub struct Person {
    /// Lines typed on the terminal.
    pub confirm: Receiver<()>,
}

impl Setup for Person {
    fn arrange(&mut self, _: &Step, note: &mut dyn FnMut(&Notice)) -> Result<(), String> {
        note(&Notice::PressEnterWhenPlaced);
        self.confirm
            .recv()
            .map_err(|_| "the terminal closed before Enter was pressed".to_string())
    }

    fn release(&mut self) {}
}

/// The virtual rig: each set-up is a scene of its model, with the truth the test knows.
pub struct VirtualSetup {
    /// The rig's scene.
    pub control: SceneControl,
    /// The true pressure for the boiling point, kPa (None: what the step is told).
    pub true_pressure_kpa: Option<f64>,
    /// The reference magnet as it truly is (its Br may differ from the stated one within its
    /// uncertainty).
    pub reference: Option<Magnet>,
    /// The coil's true field relative to the one its stated dimensions give.
    pub coil_factor: f64,
}

impl VirtualSetup {
    /// A virtual set-up that is exactly what the steps are told.
    pub fn exact(control: SceneControl) -> VirtualSetup {
        VirtualSetup {
            control,
            true_pressure_kpa: None,
            reference: None,
            coil_factor: 1.0,
        }
    }
}

/// The probe is warmed this far above ambient in a warming step, K.
pub const WARMING_K: f64 = 25.0;

impl Setup for VirtualSetup {
    fn arrange(&mut self, step: &Step, note: &mut dyn FnMut(&Notice)) -> Result<(), String> {
        let warm_to = self.control.ambient_c() + WARMING_K;
        let scene = match step {
            Step::Zero => Scene::ZeroField,
            Step::OffsetDrift => Scene::ProbeWarming {
                field_mt: 0.0,
                top_c: warm_to,
            },
            Step::Sensitivity(c) => Scene::Coil {
                field_mt: c.field().0 * self.coil_factor,
            },
            Step::ProbeTc(c) => Scene::ProbeWarming {
                field_mt: c.field().0 * self.coil_factor,
                top_c: warm_to,
            },
            Step::IcePoint => Scene::Bath { temp_c: 0.0 },
            Step::BoilingPoint(p) => {
                let stated = match p {
                    Pressure::Measured(v, _) => *v,
                    Pressure::Altitude(h) => boiling::standard_pressure_kpa(*h),
                };
                Scene::Bath {
                    temp_c: boiling::saturation_c(self.true_pressure_kpa.unwrap_or(stated)),
                }
            }
            Step::Gap(r) => {
                let m = self.reference.unwrap_or_else(|| {
                    let mut m = remanent_rig_model::catalogue::PARTS[0].magnet;
                    m.shape = r.shape;
                    m.br_20_t = r.br_t.0;
                    m
                });
                self.control.place(m);
                Scene::Fixture
            }
        };
        note(&Notice::VirtualSetUp);
        self.control.set(scene);
        Ok(())
    }

    fn release(&mut self) {
        self.control.set(Scene::Fixture);
        self.control.cool_probe();
    }
}
