"use client";

import { AllCommunityModule, ModuleRegistry, themeQuartz } from "ag-grid-community";

// Registered once for the whole app (STACK.md: AG Grid 36 needs AllCommunityModule).
ModuleRegistry.registerModules([AllCommunityModule]);

/** Tessera's grid theme: ink text, ochre accents, our font. */
export const tesseraGridTheme = themeQuartz.withParams({
  fontFamily: "var(--font-tessera), system-ui, sans-serif",
  fontSize: 13,
  foregroundColor: "#1e2a44",
  headerTextColor: "#45557b",
  headerBackgroundColor: "#f3f5f9",
  accentColor: "#c98a1b",
  borderColor: "#e3e7ef",
  rowHoverColor: "#fdf8ec",
  selectedRowBackgroundColor: "#f8ebc9",
  headerFontWeight: 600,
  wrapperBorderRadius: 8,
});
