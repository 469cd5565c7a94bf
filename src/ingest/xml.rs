//! Helpers shared by the TCX and GPX readers (local names, timestamps).
