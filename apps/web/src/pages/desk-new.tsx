import { post, type Desk } from '../api';
import type { PageProps } from '../app';
import { DeskForm } from '../components/desk-form';
import { navigate } from '../router';

export function DeskNew(_: PageProps) {
  return (
    <section class="page narrow">
      <h1>New desk</h1>
      <p class="lead">
        A desk is one triage workspace: its categories, its pool of items, its model versions and its settings.
      </p>
      <DeskForm
        submitLabel="Create the desk"
        onSubmit={async (v) => {
          const desk = await post<Desk>('/desks', v);
          navigate(`/desks/${desk.id}/import`);
        }}
      />
    </section>
  );
}
