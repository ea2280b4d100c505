export default function AdminUsersPage() {
  return null;
}
