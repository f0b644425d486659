// For someone who belongs to several studios (an engineer who also works for
// another room, a client of two studios): which one the workspace shows.
import { Form } from "react-router";

export type StudioChoice = { studioId: string; label: string };

export function StudioChooser({ choices, currentStudioId }: { choices: StudioChoice[]; currentStudioId: string }) {
  return (
    <Form method="post" action="/studio" className="flex items-center gap-2">
      <label htmlFor="studio-chooser" className="sr-only">
        Studio
      </label>
      <select
        id="studio-chooser"
        name="studioId"
        defaultValue={currentStudioId}
        className="rounded-md border border-rule bg-card px-2 py-1.5 text-sm"
        // With scripts a choice switches at once; without, the button does.
        onChange={(event) => event.currentTarget.form?.requestSubmit()}
      >
        {choices.map((choice) => (
          <option key={choice.studioId} value={choice.studioId}>
            {choice.label}
          </option>
        ))}
      </select>
      <noscript>
        <button type="submit" className="btn-quiet px-3">
          Switch
        </button>
      </noscript>
    </Form>
  );
}
