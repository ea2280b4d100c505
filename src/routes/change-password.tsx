import { useState } from 'react';
import { useNavigate } from 'react-router-dom';
import { useSession } from '../app/session';
import { PageHeader } from '../components/PageHeader';
import { ChangePasswordForm } from '../features/auth/components/ChangePasswordForm';

export default function ChangePasswordPage() {
  const { user } = useSession();
  const navigate = useNavigate();
  // remember whether this visit was forced: after the change the session no longer says so
  const [forced] = useState(user.mustChangePassword);
  const [done, setDone] = useState(false);
  return (
    <div className="max-w-md">
      <PageHeader
        title={forced ? 'Choose your own password' : 'Change password'}
        subtitle={
          forced
            ? 'Your account has a temporary password set by an administrator. Choose a password only you know before you continue.'
            : 'Other sessions of your account end when the password changes.'
        }
      />
      {done ? (
        <p role="status" className="rounded-md border border-pass/40 bg-pass-soft px-3 py-2 text-sm">
          Your password was changed.
        </p>
      ) : (
        <ChangePasswordForm
          username={user.username}
          forced={forced}
          onChanged={() => {
            if (forced) navigate('/', { replace: true, state: { notice: 'Your password was changed.' } });
            else setDone(true);
          }}
        />
      )}
    </div>
  );
}
