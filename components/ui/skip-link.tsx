"use client";

/**
 * "Skip to main content": the first thing Tab reaches on every page. It moves focus
 * itself (not only the scroll position) to the page's <main id="main-content" tabIndex={-1}>,
 * so the next Tab continues inside the content.
 */
export function SkipLink() {
  return (
    <a
      href="#main-content"
      className="skip-link"
      onClick={(e) => {
        const main = document.getElementById("main-content");
        if (!main) return;
        e.preventDefault();
        main.focus();
        main.scrollIntoView();
      }}
    >
      Skip to main content
    </a>
  );
}
