import fs from 'node:fs';

/**
 * Next rewrites the tsconfig it is given (adding its build folder's types). It gets a generated one that extends
 * ours, so the committed tsconfig stays clean whichever build folder is used (tests build one per source digest).
 */
const generatedTsconfig = '.next-tsconfig.json';
if (!fs.existsSync(generatedTsconfig)) {
  fs.writeFileSync(generatedTsconfig, JSON.stringify({ extends: './tsconfig.json' }, null, 2) + '\n');
}

/** Security headers for every answer; the page CSP with its per-request nonce is set in proxy.ts. */
const securityHeaders = [
  { key: 'X-Content-Type-Options', value: 'nosniff' },
  { key: 'Referrer-Policy', value: 'same-origin' },
  { key: 'X-Frame-Options', value: 'DENY' },
  { key: 'Permissions-Policy', value: 'camera=(), microphone=(), geolocation=()' },
];

/** @type {import('next').NextConfig} */
const nextConfig = {
  poweredByHeader: false,
  // Types are checked by `tsc --noEmit` in the test suite (tests/typecheck.test.ts), once, for the whole tree.
  typescript: { ignoreBuildErrors: true, tsconfigPath: generatedTsconfig },
  distDir: process.env.NEXT_DIST_DIR || '.next',
  // h5wasm (netCDF-4 intake) is an Emscripten build that loads its WebAssembly beside itself: Node loads it, unbundled.
  serverExternalPackages: ['sequelize', 'sqlite3', 'pg', 'pg-hstore', 'umzug', 'smtp-server', 'nodemailer', 'bcryptjs', 'h5wasm'],
  async headers() {
    return [
      { source: '/:path*', headers: securityHeaders },
      // API answers are data, never documents to render or frame.
      { source: '/api/:path*', headers: [{ key: 'Content-Security-Policy', value: "default-src 'none'; frame-ancestors 'none'" }] },
    ];
  },
};

export default nextConfig;
