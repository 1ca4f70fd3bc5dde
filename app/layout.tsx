import type { Metadata } from 'next';
import localFont from 'next/font/local';
import type { ReactNode } from 'react';
import { Providers } from '@/components/Providers';
import './globals.css';

const sans = localFont({
  src: '../node_modules/@fontsource-variable/inter/files/inter-latin-wght-normal.woff2',
  variable: '--font-sans',
  display: 'swap',
});
const mono = localFont({
  src: '../node_modules/@fontsource-variable/jetbrains-mono/files/jetbrains-mono-latin-wght-normal.woff2',
  variable: '--font-mono',
  display: 'swap',
});

// Every page renders per request so Next.js can put the request's CSP nonce (proxy.ts) on its scripts; a page
// prerendered at build time has no nonce, and 'strict-dynamic' would block all of its scripts.
export const dynamic = 'force-dynamic';

export const metadata: Metadata = {
  title: { default: 'Brinkwatch', template: '%s · Brinkwatch' },
  description: 'Early-warning indicators of critical slowing down for monitored time series.',
};

export default function RootLayout({ children }: { children: ReactNode }) {
  return (
    <html lang="en" className={`${sans.variable} ${mono.variable}`}>
      <body>
        <Providers>{children}</Providers>
      </body>
    </html>
  );
}
