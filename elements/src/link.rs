//! Link: two-node large-displacement truss that carries tension and compression.

use crate::error::ElementError;
use crate::truss::{Truss, TrussSection};

/// Two-node truss that also carries compression (insulator string as a
/// rod, strut, stiff connector).
///
/// `N = EA (l − Lt)/Lt` with `Lt = L0 (1 + α ΔT)` for any length. No
/// buckling check. Translations only: rotational rows and columns are zero.
#[derive(Clone, Debug, PartialEq)]
pub struct Link(Truss);

impl Link {
    /// Link between `nodes` of unstretched length `unstretched_length` (m)
    /// at the reference temperature. Fails unless `L0 > 0`, `EA > 0`,
    /// mass ≥ 0 and α finite.
    pub fn new(
        nodes: [usize; 2],
        unstretched_length: f64,
        section: TrussSection,
    ) -> Result<Self, ElementError> {
        Truss::new("link", nodes, unstretched_length, section, false).map(Self)
    }

    /// The section data.
    pub fn section(&self) -> &TrussSection {
        &self.0.section
    }
}

crate::truss::impl_truss_element!(Link, "link");
