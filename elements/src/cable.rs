//! Cable: two-node large-displacement truss that carries no compression.

use crate::error::ElementError;
use crate::truss::{Truss, TrussSection};

/// Tension-only two-node truss (conductor, earth wire, hanger).
///
/// `N = EA (l − Lt)/Lt` with `Lt = L0 (1 + α ΔT)` while `l > Lt`; when
/// slack (`l ≤ Lt`) force and stiffness are zero. Translations only:
/// rotational rows and columns are zero.
#[derive(Clone, Debug, PartialEq)]
pub struct Cable(Truss);

impl Cable {
    /// Cable between `nodes` of unstretched length `unstretched_length` (m)
    /// at the reference temperature. Fails unless `L0 > 0`, `EA > 0`,
    /// mass ≥ 0 and α finite.
    pub fn new(
        nodes: [usize; 2],
        unstretched_length: f64,
        section: TrussSection,
    ) -> Result<Self, ElementError> {
        Truss::new("cable", nodes, unstretched_length, section, true).map(Self)
    }

    /// The section data.
    pub fn section(&self) -> &TrussSection {
        &self.0.section
    }
}

crate::truss::impl_truss_element!(Cable, "cable");
