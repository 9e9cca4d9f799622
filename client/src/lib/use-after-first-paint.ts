import { useEffect, useState } from 'react';

/**
 * False while a screen mounts and until its first frame has been painted, then true: parts below
 * the fold or beside the main view (the review screen's spectrum) render after the traces are on
 * screen instead of adding to their first frame. A requestAnimationFrame callback runs just before
 * a paint; a task queued from it runs after that paint.
 */
export function useAfterFirstPaint(): boolean {
  const [painted, setPainted] = useState(false);
  useEffect(() => {
    let timer = 0;
    const frame = requestAnimationFrame(() => {
      timer = window.setTimeout(() => setPainted(true), 0);
    });
    return () => {
      cancelAnimationFrame(frame);
      window.clearTimeout(timer);
    };
  }, []);
  return painted;
}
