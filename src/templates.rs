//! Starter schemes for `tapplan new`, built into the binary from `templates/`.

/// A starter scheme: its name, what it is for, and its text.
pub struct Template {
    pub name: &'static str,
    pub about: &'static str,
    pub text: &'static str,
}

pub const TEMPLATES: &[Template] = &[
    Template {
        name: "solar",
        about: "solar-pumped borehole lifting to a storage tank",
        text: include_str!("../templates/solar.yaml"),
    },
    Template {
        name: "generator",
        about: "generator-driven borehole pumps on daily shifts into an elevated tank",
        text: include_str!("../templates/generator.yaml"),
    },
    Template {
        name: "ram",
        about: "hydraulic rams on a stream fall lifting to a hillside tank",
        text: include_str!("../templates/ram.yaml"),
    },
    Template {
        name: "hand",
        about: "hand pumps, with a solar pump and tank as the option to motorise",
        text: include_str!("../templates/hand.yaml"),
    },
    Template {
        name: "oscillating",
        about: "small hamlet on a low-yield borehole, a surface-driven oscillating-flow pump on PV",
        text: include_str!("../templates/oscillating.yaml"),
    },
];

/// The template of that name.
pub fn find(name: &str) -> Option<&'static Template> {
    TEMPLATES.iter().find(|t| t.name == name)
}
