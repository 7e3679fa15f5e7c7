//! A customer's order for a board: the free-text fields the order sheet
//! carries. None of them changes the shape.

/// What the customer asked for, as the shop wrote it down.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Order {
    /// The customer's name.
    pub customer: Option<String>,
    /// The shop's order number or reference.
    pub reference: Option<String>,
    /// When it is wanted.
    pub due: Option<String>,
    /// Colour, tint, spray, logos.
    pub colour: Option<String>,
    /// Anything else for the glasser or the customer.
    pub notes: Option<String>,
}

impl Order {
    /// Whether any field is given.
    pub fn is_empty(&self) -> bool {
        [
            &self.customer,
            &self.reference,
            &self.due,
            &self.colour,
            &self.notes,
        ]
        .iter()
        .all(|f| f.is_none())
    }
}
