'use client';

/** Last-resort boundary when the root layout itself fails; inline styles because globals.css may not load. */
export default function GlobalError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <html lang="en">
      <body style={{ fontFamily: 'system-ui, sans-serif', background: '#f3f1ec', color: '#111c26', display: 'grid', placeItems: 'center', minHeight: '100vh', margin: 0 }}>
        <main style={{ textAlign: 'center', padding: 24 }}>
          <h1 style={{ fontSize: 22 }}>Trenchant could not load this page</h1>
          <p style={{ color: '#56687a', fontSize: 14 }}>Reference: {error.digest ?? 'none'}</p>
          <button type="button" onClick={reset} style={{ marginTop: 16, padding: '8px 14px', background: '#c0733f', color: 'white', border: 0, borderRadius: 6 }}>
            Try again
          </button>
        </main>
      </body>
    </html>
  );
}
