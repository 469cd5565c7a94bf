//! The roster folder: athletes, profiles, plans, activities, notes.
