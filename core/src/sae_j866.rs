//! SAE J866 friction code letters for a friction coefficient.
//!
//! The code grades a lining's normal and hot friction, as measured by the SAE J661 test, into
//! letters with "over x, not over y" edges \[pub: SAE J866\]:
//!
//! | letter | μ |
//! |---|---|
//! | C | not over 0.15 |
//! | D | over 0.15, not over 0.25 |
//! | E | over 0.25, not over 0.35 |
//! | F | over 0.35, not over 0.45 |
//! | G | over 0.45, not over 0.55 |
//! | H | over 0.55 |
//! | Z | unclassified |
//!
//! Here Z is returned for a non-physical μ (negative). SAE notes that the code does not predict
//! how a brake system performs; it is a label for a lining, not a design value.
//!
//! The edges are the nearest [`Ratio`] to each decimal (I2F30: within 0.47·10⁻⁹ of it); a μ equal
//! to that edge value falls in the lower class ("not over").

use core::fmt;

use crate::units::Ratio;

/// An SAE J866 friction code letter.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FrictionCode {
    /// μ not over 0.15.
    C,
    /// μ over 0.15, not over 0.25.
    D,
    /// μ over 0.25, not over 0.35.
    E,
    /// μ over 0.35, not over 0.45.
    F,
    /// μ over 0.45, not over 0.55.
    G,
    /// μ over 0.55.
    H,
    /// Unclassified (here: a negative, non-physical μ).
    Z,
}

/// Upper edges of C, D, E, F, G ("not over").
const EDGES: [(Ratio, FrictionCode); 5] = [
    (Ratio::lit("0.15"), FrictionCode::C),
    (Ratio::lit("0.25"), FrictionCode::D),
    (Ratio::lit("0.35"), FrictionCode::E),
    (Ratio::lit("0.45"), FrictionCode::F),
    (Ratio::lit("0.55"), FrictionCode::G),
];

impl FrictionCode {
    /// Classify a friction coefficient.
    ///
    /// ```
    /// use clampwise_core::sae_j866::FrictionCode;
    /// use clampwise_core::units::Ratio;
    /// assert_eq!(FrictionCode::classify(Ratio::lit("0.35")), FrictionCode::E);
    /// assert_eq!(FrictionCode::classify(Ratio::lit("0.36")), FrictionCode::F);
    /// assert_eq!(FrictionCode::classify(Ratio::lit("-0.1")), FrictionCode::Z);
    /// ```
    pub fn classify(mu: Ratio) -> Self {
        if mu < Ratio::ZERO {
            return Self::Z;
        }
        EDGES
            .iter()
            .find(|(edge, _)| mu <= *edge)
            .map_or(Self::H, |&(_, code)| code)
    }

    /// The letter as a character.
    ///
    /// ```
    /// use clampwise_core::sae_j866::FrictionCode;
    /// assert_eq!(FrictionCode::G.letter(), 'G');
    /// ```
    pub const fn letter(self) -> char {
        match self {
            Self::C => 'C',
            Self::D => 'D',
            Self::E => 'E',
            Self::F => 'F',
            Self::G => 'G',
            Self::H => 'H',
            Self::Z => 'Z',
        }
    }
}

impl fmt::Display for FrictionCode {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.letter())
    }
}

/// The two-letter J866 code of a lining: normal friction first, then hot friction.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrictionCodePair {
    /// Letter of the normal friction coefficient.
    pub normal: FrictionCode,
    /// Letter of the hot friction coefficient.
    pub hot: FrictionCode,
}

impl FrictionCodePair {
    /// Classify normal and hot μ.
    ///
    /// ```
    /// use clampwise_core::sae_j866::FrictionCodePair;
    /// use clampwise_core::units::Ratio;
    /// let code = FrictionCodePair::classify(Ratio::lit("0.40"), Ratio::lit("0.33"));
    /// assert_eq!(format!("{code}"), "FE");
    /// ```
    pub fn classify(normal: Ratio, hot: Ratio) -> Self {
        Self {
            normal: FrictionCode::classify(normal),
            hot: FrictionCode::classify(hot),
        }
    }
}

impl fmt::Display for FrictionCodePair {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}{}", self.normal, self.hot)
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use FrictionCode::*;

    // Class edges from SAE J866 [pub: SAE J866, friction code letters]: "over x, not over y".
    #[test]
    fn letters_at_the_class_edges() {
        let d = Ratio::DELTA;
        let cases = [
            ("0.15", C, D),
            ("0.25", D, E),
            ("0.35", E, F),
            ("0.45", F, G),
            ("0.55", G, H),
        ];
        for (edge, at, above) in cases {
            let e: Ratio = edge.parse().unwrap();
            assert_eq!(FrictionCode::classify(e), at, "at {edge}");
            assert_eq!(FrictionCode::classify(e - d), at, "just below {edge}");
            assert_eq!(FrictionCode::classify(e + d), above, "just over {edge}");
        }
        assert_eq!(FrictionCode::classify(Ratio::ZERO), C);
        assert_eq!(FrictionCode::classify(Ratio::MAX), H);
        assert_eq!(FrictionCode::classify(-d), Z);
        assert_eq!(FrictionCode::classify(Ratio::MIN), Z);
    }

    // Handbook values [pub: Tribology Handbook]: resin pads μ ≈ 0.32 → E; dry woven clutch
    // 0.35–0.40 → E at 0.35 (not over), F at 0.40; oil-immersed paper 0.11 → C.
    #[test]
    fn handbook_linings() {
        assert_eq!(FrictionCode::classify(Ratio::lit("0.32")), E);
        assert_eq!(FrictionCode::classify(Ratio::lit("0.35")), E);
        assert_eq!(FrictionCode::classify(Ratio::lit("0.40")), F);
        assert_eq!(FrictionCode::classify(Ratio::lit("0.11")), C);
    }
}
