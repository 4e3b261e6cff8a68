import { useEffect, useState } from "react";
import { useRevalidator } from "react-router";

/** The page's clock, ticking every 15 s, with the loader's data refreshed every 30 s (no reload). */
export function useLiveNow(initial: number) {
  const [now, setNow] = useState(initial);
  const revalidator = useRevalidator();
  useEffect(() => {
    const tick = setInterval(() => setNow(Date.now()), 15_000);
    const poll = setInterval(() => {
      if (revalidator.state === "idle" && document.visibilityState === "visible") revalidator.revalidate();
    }, 30_000);
    return () => {
      clearInterval(tick);
      clearInterval(poll);
    };
  }, [revalidator]);
  return now;
}
