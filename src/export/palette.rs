//! The colours that tell designs apart, shared by the window and by exported images, so a
//! design drawn orange on screen is orange in its PNG or SVG too.
//!
//! The set is the colour-blind-safe one of M. Okabe and K. Ito, "Color Universal Design (CUD):
//! how to make figures and presentations that are friendly to colorblind people" (2008),
//! without its black (invisible on the window's dark background): orange, sky blue, bluish
//! green, vermilion, blue, reddish purple, yellow. Design k (counting from 0 in the order the
//! designs were opened, or given on the command line) takes entry k; past the end the colours
//! repeat.

/// The design colours in order of use, as (red, green, blue).
pub const DESIGN_COLOURS: [(u8, u8, u8); 7] = [
    (230, 159, 0),   // orange
    (86, 180, 233),  // sky blue
    (0, 158, 115),   // bluish green
    (213, 94, 0),    // vermilion
    (0, 114, 178),   // blue
    (204, 121, 167), // reddish purple
    (240, 228, 66),  // yellow
];

/// The colour of design slot `slot` (wrapping around).
///
/// ```
/// use stackwise::export::palette::{design_colour, DESIGN_COLOURS};
/// assert_eq!(design_colour(0), (230, 159, 0));
/// assert_eq!(design_colour(DESIGN_COLOURS.len()), design_colour(0));
/// ```
#[must_use]
pub fn design_colour(slot: usize) -> (u8, u8, u8) {
    DESIGN_COLOURS[slot % DESIGN_COLOURS.len()]
}

/// The slot of a colour in [`DESIGN_COLOURS`], if it is one of them.
///
/// ```
/// use stackwise::export::palette::slot_of;
/// assert_eq!(slot_of((86, 180, 233)), Some(1));
/// assert_eq!(slot_of((1, 2, 3)), None);
/// ```
#[must_use]
pub fn slot_of(rgb: (u8, u8, u8)) -> Option<usize> {
    DESIGN_COLOURS.iter().position(|&c| c == rgb)
}
