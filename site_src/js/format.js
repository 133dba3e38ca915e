// Saving what the page made (figures, scenario files). Numbers are rounded for reading by
// render.js, the one renderer of quantities.

// Offer `blob` as a download called `name`.
export function saveBlob(blob, name) {
  const a = document.createElement("a");
  a.href = URL.createObjectURL(blob);
  a.download = name;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(a.href), 10000);
}
