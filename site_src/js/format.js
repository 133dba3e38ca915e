// Numbers for reading: a few significant digits; the full value stays one click away.

export function roundForReading(value, digits = 3) {
  if (value === null || value === undefined) return "—";
  if (typeof value !== "number") return String(value);
  if (!Number.isFinite(value)) return String(value);
  if (value === 0) return "0";
  const size = Math.abs(value);
  if (size >= 1e5 || size < 1e-3) return value.toExponential(digits - 1).replace("e+", "e");
  const decimals = Math.max(0, digits - 1 - Math.floor(Math.log10(size)));
  return value.toFixed(decimals);
}

// A <button> showing the rounded value; click or Enter toggles the full value.
export function numberButton(value, key, digits = 3) {
  const button = document.createElement("button");
  button.type = "button";
  button.className = "num";
  button.dataset.key = key;
  const rounded = roundForReading(value, digits);
  const full = value === null || value === undefined ? "—" : String(value);
  button.dataset.value = full;
  button.dataset.rounded = rounded;
  return toggleFull(button, rounded, full);
}

// Show `rounded` on the button; a click (or Enter) toggles to `full` and back.
export function toggleFull(button, rounded, full) {
  button.textContent = rounded;
  button.title = `full value: ${full}`;
  button.setAttribute("aria-pressed", "false");
  button.addEventListener("click", () => {
    const showFull = button.getAttribute("aria-pressed") !== "true";
    button.setAttribute("aria-pressed", String(showFull));
    button.textContent = showFull ? full : rounded;
  });
  return button;
}

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
