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
  typescript: { ignoreBuildErrors: true },
  distDir: process.env.NEXT_DIST_DIR || '.next',
  serverExternalPackages: ['sequelize', 'sqlite3', 'umzug', 'smtp-server', 'nodemailer', 'bcryptjs'],
  async headers() {
    return [
      { source: '/:path*', headers: securityHeaders },
      // API answers are data, never documents to render or frame.
      { source: '/api/:path*', headers: [{ key: 'Content-Security-Policy', value: "default-src 'none'; frame-ancestors 'none'" }] },
    ];
  },
};

export default nextConfig;
