//! The safety cautions written at the head of every program, one set per kind of machine.
//!
//! The points follow docs/sources.md P5 (guarding as in OSHA 29 CFR 1910.212 and
//! ISO 16090-1 for mills, ISO 19085 for wood routers; fire watch after hot work as in OSHA
//! 29 CFR 1910.252 and NFPA 51B; laser enclosures as in IEC 60825-1 and ISO 11553-1), written in
//! our own words. They are reminders, not a risk assessment.

use super::profile::MachineKind;

/// The heading of the safety block.
pub const SAFETY_HEADING: &str = "SAFETY - read before running this program";

/// The last line of every safety block.
pub const PRECEDENCE: &str =
    "The machine maker's manual and local safety rules take precedence over this program.";

/// The caution lines for one kind of machine, without the heading and the closing precedence
/// statement. `units_word` is the program's units word (`G21` or `G20`) and `units` its name.
pub fn cautions(kind: MachineKind, units_word: &str, units: &str) -> Vec<String> {
    let check = match kind {
        MachineKind::Mill | MachineKind::Router => format!(
            "conicut wrote this program automatically. Before you run it, check that the units \
             {units_word} {units}, the work offset and the tool data match your set-up."
        ),
        MachineKind::Laser | MachineKind::Plasma | MachineKind::Waterjet => format!(
            "conicut wrote this program automatically. Before you run it, check that the units \
             {units_word} {units}, the work offset, the kerf width and the process settings \
             from the machine's cutting charts match your set-up."
        ),
    };
    let mut lines = vec![check];
    let specific: &[&str] = match kind {
        MachineKind::Mill => &[
            "Run it once in the air first: work zero raised above the stock or Z offset lifted, feed override turned down, hand on the stop button.",
            "Check that the tool length offset is active and that the tool diameter matches the one in this header.",
            "Clamp the work so that no clamp, vise jaw, bolt or stop lies under the tool path or the rapid moves.",
            "Keep the guards and doors closed while the spindle turns. Wear eye protection. Chips are hot and sharp; coolant is slippery.",
            "Never reach in, clear chips or measure while the spindle turns: stop it first.",
        ],
        MachineKind::Router => &[
            "Run it once in the air first: tool raised clear of the sheet, feed override turned down, hand on the stop button.",
            "Hold the sheet down (clamps, screws or vacuum) so that no hold-down lies under the tool path and small parts cannot fly off.",
            "Keep the guards and the dust hood in place. Chips and dust fly: wear eye and hearing protection and run dust extraction; fine dust is a fire and health hazard.",
            "Keep hands and loose clothing away from the cutter; never reach in or clear chips while the spindle turns.",
        ],
        MachineKind::Laser => &[
            "Run only with the interlocked enclosure closed: the beam and its reflections burn eyes and skin and start fires. Wear eyewear rated for this laser whenever the enclosure is open.",
            "Frame or trace the job with the beam off first.",
            "Fire risk: never leave the machine unattended while it cuts, keep an extinguisher at hand, and watch the work and the table for smouldering after the job.",
            "Run fume extraction. Do not cut PVC, or any material whose fumes you do not know.",
        ],
        MachineKind::Plasma => &[
            "Trace the job with the torch off first, and check the torch height before piercing.",
            "Weigh down or clamp the plate, and make sure cut parts cannot tip up into the torch's path.",
            "Fire risk: clear combustibles from around the table, keep an extinguisher at hand, never leave the machine unattended while it cuts, and keep a fire watch after the job.",
            "High voltage: follow the torch maker's lock-out rules before touching the torch or its consumables.",
            "Wear eye protection with a shade rated for the arc, and run fume extraction: coated and stainless steel give off hazardous fumes. Parts and slag stay hot long after the cut.",
        ],
        MachineKind::Waterjet => &[
            "Trace the job with the jet off first.",
            "Weigh down or clamp the plate, and make sure cut parts cannot tip up into the nozzle's path.",
            "The jet cuts flesh and can inject water and abrasive under the skin: never put any part of the body near the nozzle or the jet path, and keep the guards in place.",
            "Release the pressure before any work on the pump, the lines or the cutting head.",
            "Wear eye and hearing protection, and keep the catcher tank filled as its maker requires.",
        ],
    };
    lines.extend(specific.iter().map(|s| s.to_string()));
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_kind_has_its_own_cautions() {
        let kinds = [
            MachineKind::Mill,
            MachineKind::Router,
            MachineKind::Laser,
            MachineKind::Plasma,
            MachineKind::Waterjet,
        ];
        let sets: Vec<Vec<String>> = kinds.iter().map(|&k| cautions(k, "G21", "mm")).collect();
        for (i, a) in sets.iter().enumerate() {
            assert!(a.len() >= 4, "{:?} has too few cautions", kinds[i]);
            assert!(a[0].contains("G21"));
            for b in &sets[i + 1..] {
                assert_ne!(a, b);
            }
        }
        let text = |k| cautions(k, "G21", "mm").join(" ");
        // docs/sources.md P5: thermal processes carry a fire warning, never unattended,
        // and fumes; lasers an enclosure and eyewear; waterjets the jet injury; mills and
        // routers guards, clamping or hold-downs, and chips.
        for k in [MachineKind::Laser, MachineKind::Plasma] {
            let t = text(k);
            for needle in ["Fire", "unattended", "fume"] {
                assert!(t.contains(needle), "{k}: no {needle:?}");
            }
        }
        assert!(text(MachineKind::Laser).contains("enclosure"));
        assert!(text(MachineKind::Laser).contains("eyewear"));
        assert!(text(MachineKind::Waterjet).contains("inject"));
        for (k, hold) in [(MachineKind::Mill, "Clamp"), (MachineKind::Router, "Hold")] {
            let t = text(k);
            for needle in ["guards", hold, "hips"] {
                assert!(t.contains(needle), "{k}: no {needle:?}");
            }
        }
    }
}
