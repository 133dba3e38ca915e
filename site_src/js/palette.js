// The page's colours, one meaning each in every plot and drawing:
//   synapse  — the synapse, and a signal that starts there (current injected at the synapse);
//   soma     — the soma or the root, and a signal that starts there;
//   point    — a signal that starts at any point of the tree (the whole-tree maps);
//   cylinder — the equivalent cylinder;
//   tree     — the full tree's branches drawn alike;
//   ink, muted, rule — lines and text of a drawing, quiet text, connecting lines;
//   error    — a parent that is not in the table.
// Branch colours (one per branch where branches are told apart) are picked away from every
// reserved hue, so that they never read as the synapse, the soma or the cylinder, however many
// branches there are (past the list they repeat, never reaching a reserved colour).
export const COLOURS = Object.freeze({
  synapse: "#c2571a",
  soma: "#1b6ca8",
  point: "#4a5160",
  cylinder: "#7b3fa0",
  tree: "#8f98a6",
  ink: "#1d2330",
  muted: "#5a6270",
  rule: "#9aa3b0",
  error: "#a51d24",
});

// Hues (HSL) 30 degrees or more from the synapse (near 22), the soma (206) and the cylinder (277).
const BRANCH = Object.freeze([
  "#2e7d32", "#9e8f12", "#00897b", "#b0306e", "#5b8c1e", "#6b7d00", "#00695c", "#8e2450",
  "#3f9b5f", "#6f7f12", "#1f7a6d", "#c2407e",
]);

export function branchColour(index) {
  return BRANCH[index % BRANCH.length];
}

export const branchPalette = () => [...BRANCH];
