// The layout sheet's print button (no inline handlers: the CSP allows no inline script).
document.getElementById("print-sheet").addEventListener("click", () => window.print());
