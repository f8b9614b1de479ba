import { useEffect, useState } from "preact/hooks";
import { loadJob } from "../repo";
import { Header, SHORT_CAUTION } from "./common";
import { href } from "./hooks";
import { Sign } from "./signs";

export function Cautions({ id }: { id: number }) {
  const [text, setText] = useState<string | null>(null);
  useEffect(() => {
    loadJob(id).then((j) => setText(j.value.cautions)).catch(() => setText(""));
  }, [id]);
  return (
    <main class="screen">
      <Header title="Cautions" back={href({ name: "job", id })} />
      <section class="card cautions" data-testid="cautions">
        <Sign kind="caution" size={48} />
        <p><strong>{SHORT_CAUTION}</strong></p>
        {text && text.split(/\n{2,}/).map((para) => <p data-testid="job-cautions">{para}</p>)}
        <p>The verdicts on this phone are an early reading. The server recomputes every check when it is sent, and its verdict is the one on the daily record.</p>
        {!text?.includes("competent person") && <p>When in doubt, stop work and ask the competent person on site.</p>}
      </section>
    </main>
  );
}
