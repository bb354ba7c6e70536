"use client";

import { useLayoutEffect, useState, type RefObject } from "react";

/**
 * The element's content width in px, null until measured (on the server and in the
 * render that hydrates), then kept up to date with a ResizeObserver. Measured in a
 * layout effect, so the re-render with a width happens before the browser paints.
 *
 * `later`: the first width is handed over only after the browser has painted once
 * more, so that a chart lower on the page (still showing its server-drawn first paint
 * meanwhile) does not lengthen the task that makes the first chart interactive.
 */
export function useWidth(ref: RefObject<HTMLElement | null>, later = false): number | null {
  const [width, setWidth] = useState<number | null>(null);
  useLayoutEffect(() => {
    const el = ref.current;
    if (!el) return;
    const measure = () => setWidth(Math.max(0, Math.floor(el.clientWidth)));
    let frame = 0;
    let timer: ReturnType<typeof setTimeout> | undefined;
    if (later) frame = requestAnimationFrame(() => (timer = setTimeout(measure, 0)));
    else measure();
    const observer = new ResizeObserver(() => {
      if (!later || timer !== undefined) measure();
    });
    observer.observe(el);
    return () => {
      cancelAnimationFrame(frame);
      if (timer !== undefined) clearTimeout(timer);
      observer.disconnect();
    };
  }, [ref, later]);
  return width;
}
