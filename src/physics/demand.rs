#[derive(Clone, Copy)]
pub enum BuiltinProfile {
    CommunalTaps,
    YardTaps,
    Flat,
}
impl BuiltinProfile {
    pub const ALL: [BuiltinProfile; 3] = [
        BuiltinProfile::CommunalTaps,
        BuiltinProfile::YardTaps,
        BuiltinProfile::Flat,
    ];
    pub fn from_name(s: &str) -> Option<Self> {
        match s {
            "communal_taps" => Some(Self::CommunalTaps),
            "yard_taps" => Some(Self::YardTaps),
            "flat" => Some(Self::Flat),
            _ => None,
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            Self::CommunalTaps => "communal_taps",
            Self::YardTaps => "yard_taps",
            Self::Flat => "flat",
        }
    }
    pub fn factors(self) -> [f64; 24] {
        [1.0 / 24.0; 24]
    }
}
