import type { Metadata, Viewport } from "next";
import type { ReactNode } from "react";
import { SiteHeader } from "./components/site-header";
import "./globals.css";

export const metadata: Metadata = {
  title: { default: "Linemix", template: "%s · Linemix" },
  description: "Do the lines make the same kinds of defects? Defect-mix monitoring for plant quality engineers.",
};

export const viewport: Viewport = { width: "device-width", initialScale: 1 };

export default function RootLayout({ children }: { children: ReactNode }) {
  return (
    <html lang="en">
      <body>
        <a className="skip-link" href="#main">
          Skip to content
        </a>
        <SiteHeader />
        <main id="main" tabIndex={-1}>
          {children}
        </main>
      </body>
    </html>
  );
}
